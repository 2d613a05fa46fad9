/**
 * The goal sets the engine knows, by id. The published sets are registered by default; a new set
 * or a new version of a published one (for example an SSC 2026 set) is registered from data alone
 * (`registry.register(json)`), validated by the zod schema in schema.ts. Pure.
 */
import { GoalSetDef } from './schema.js';
import { EGDT } from './sets/egdt.js';
import { SEP1 } from './sets/sep1.js';
import { SSC2021_TARGETS } from './sets/ssc2021-targets.js';
import { SSC_HOUR1 } from './sets/ssc-hour1.js';

/** The published sets, in the order the app lists them. */
export const GOAL_SETS: readonly GoalSetDef[] = [SSC_HOUR1, SEP1, SSC2021_TARGETS, EGDT];

/** Sets switched on for a new worksheet (design.md; EGDT is off by default). */
export const DEFAULT_SET_IDS: readonly string[] = ['ssc-hour1', 'sep1', 'ssc2021-targets'];

/** The pseudo set id under which the worksheet's own custom goals are evaluated. */
export const CUSTOM_SET_ID = 'custom';

export class UnknownGoalSetError extends Error {
  constructor(
    readonly setId: string,
    known: readonly string[],
  ) {
    super(`Unknown goal set "${setId}"; known sets: ${[...known, CUSTOM_SET_ID].join(', ')}`);
    this.name = 'UnknownGoalSetError';
  }
}

export class GoalRegistry {
  private readonly sets = new Map<string, GoalSetDef>();

  constructor(sets: readonly GoalSetDef[] = []) {
    for (const s of sets) this.register(s);
  }

  /**
   * Validates and adds a set from plain data (e.g. parsed JSON). Throws with the schema's message
   * when the data is not a valid set, or when the id is taken and `replace` is not set.
   */
  register(data: unknown, options: { replace?: boolean } = {}): GoalSetDef {
    const parsed = GoalSetDef.safeParse(data);
    if (!parsed.success) {
      const first = parsed.error.issues[0];
      const where = first && first.path.length > 0 ? ` at ${first.path.join('.')}` : '';
      throw new Error(`Not a valid goal set${where}: ${first?.message ?? 'invalid data'}`);
    }
    const set = parsed.data;
    if (set.id === CUSTOM_SET_ID) throw new Error(`The goal set id "${CUSTOM_SET_ID}" is reserved for the worksheet's own goals`);
    if (this.sets.has(set.id) && !options.replace) throw new Error(`A goal set with id "${set.id}" is already registered`);
    this.sets.set(set.id, set);
    return set;
  }

  has(id: string): boolean {
    return this.sets.has(id);
  }

  get(id: string): GoalSetDef | undefined {
    return this.sets.get(id);
  }

  /** Like get, but throws UnknownGoalSetError. */
  require(id: string): GoalSetDef {
    const s = this.sets.get(id);
    if (!s) throw new UnknownGoalSetError(id, this.ids());
    return s;
  }

  ids(): string[] {
    return [...this.sets.keys()];
  }

  all(): GoalSetDef[] {
    return [...this.sets.values()];
  }
}

/** A new registry holding the published sets. */
export function createDefaultRegistry(): GoalRegistry {
  return new GoalRegistry(GOAL_SETS);
}

/** The shared registry the app and the command line use. */
export const defaultRegistry: GoalRegistry = createDefaultRegistry();
