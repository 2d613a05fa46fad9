/**
 * Goal sets as data. A goal set is a plain object (it can come from JSON) validated by the zod
 * schemas below; the engine interprets a small vocabulary of condition kinds ("predicates") and
 * rule kinds. Adding a new published version (for example a 2026 guideline) means writing a new
 * data object and registering it; the engine does not change.
 *
 * Pure module: no DOM, no wall clock.
 */
import { z } from 'zod';
import { MeasureKey } from '../sheet/model.js';

/** Comparison used by value conditions. */
export const Comparison = z.enum(['>', '>=', '<', '<=']);
export type Comparison = z.infer<typeof Comparison>;

const Minutes = z
  .number()
  .int()
  .min(0)
  .max(7 * 24 * 60);
const Keys = z.array(MeasureKey).min(1).max(20);

// --- Conditions (predicates) -----------------------------------------------------------------
// Each condition, evaluated at a moment, is `yes` (with the time it arose), `no`, or `unknown`
// (cannot be judged yet). A goal applies when its condition is `yes`.

/** Always applies. */
const Always = z.strictObject({ kind: z.literal('always') });

/** The first value of `key` charted from `lookbackMinutes` before time zero compares with `value`. */
const InitialValue = z.strictObject({
  kind: z.literal('initial-value'),
  key: MeasureKey,
  op: Comparison,
  value: z.number(),
  lookbackMinutes: Minutes.optional(),
});

/** Any value of one of `keys` (from the lookback on) compares with `value`; arises at the first such value. */
const AnyValue = z.strictObject({
  kind: z.literal('any-value'),
  keys: Keys,
  op: Comparison,
  value: z.number(),
  lookbackMinutes: Minutes.optional(),
});

/** The worksheet has a septic shock presentation time set by the user. */
const ShockTimeSet = z.strictObject({ kind: z.literal('shock-time-set') });

/** Crystalloid from the lookback on reaches `mlPerKg` × dosing weight; arises at the row where it does. */
const VolumeReached = z.strictObject({
  kind: z.literal('volume-reached'),
  key: MeasureKey,
  mlPerKg: z.number().positive(),
  lookbackMinutes: Minutes.optional(),
});

export interface HypotensionTest {
  /** A reading is low when SBP is below this (mmHg). */
  sbpBelow?: number | undefined;
  /** A reading is low when MAP (measured, or estimated from SBP and DBP) is below this (mmHg). */
  mapBelow?: number | undefined;
  /** A reading is low when SBP is more than this many mmHg under the worksheet's baseline SBP. */
  sbpDropAbove?: number | undefined;
}

const HypotensionFields = {
  sbpBelow: z.number().optional(),
  mapBelow: z.number().optional(),
  sbpDropAbove: z.number().optional(),
};

// Predicate is recursive (any/all/after); its TypeScript type is written once here and the
// schema is checked against it.
export type Predicate =
  | z.infer<typeof Always>
  | z.infer<typeof InitialValue>
  | z.infer<typeof AnyValue>
  | z.infer<typeof ShockTimeSet>
  | z.infer<typeof VolumeReached>
  | ({
      kind: 'hypotension';
      /** Number of consecutive low readings needed (readings = rows with SBP or MAP). */
      consecutive: number;
      /** Readings count from this many minutes before time zero (default 0). */
      lookbackMinutes?: number | undefined;
      /** Readings count up to this many minutes after time zero (default: no limit). */
      withinMinutes?: number | undefined;
      /** Readings count only at or after the moment this condition arose. */
      after?: Predicate | undefined;
    } & HypotensionTest)
  | ({
      kind: 'hypotension-after-volume';
      key: string;
      mlPerKg: number;
      /** Window after the volume is complete in which the low readings must fall. */
      withinMinutes: number;
      consecutive: number;
      lookbackMinutes?: number | undefined;
    } & HypotensionTest)
  | { kind: 'any'; of: Predicate[] }
  | { kind: 'all'; of: Predicate[] };

export const Predicate: z.ZodType<Predicate> = z.lazy(() =>
  z.discriminatedUnion('kind', [
    Always,
    InitialValue,
    AnyValue,
    ShockTimeSet,
    VolumeReached,
    z.strictObject({
      kind: z.literal('hypotension'),
      consecutive: z.number().int().min(1).max(10),
      lookbackMinutes: Minutes.optional(),
      withinMinutes: Minutes.optional(),
      after: Predicate.optional(),
      ...HypotensionFields,
    }),
    z.strictObject({
      kind: z.literal('hypotension-after-volume'),
      key: MeasureKey,
      mlPerKg: z.number().positive(),
      withinMinutes: Minutes,
      consecutive: z.number().int().min(1).max(10),
      lookbackMinutes: Minutes.optional(),
      ...HypotensionFields,
    }),
    z.strictObject({ kind: z.literal('any'), of: z.array(Predicate).min(1).max(20) }),
    z.strictObject({ kind: z.literal('all'), of: z.array(Predicate).min(1).max(20) }),
  ]),
);

// --- Rules: what satisfies a goal ------------------------------------------------------------

/**
 * Met at the first row (from the lookback before time zero on) with a value of one of `keys`.
 * For number measures `op`/`value` can ask for a value above zero (a running infusion).
 * With `notBefore`, only rows at or after the moment that condition arose count.
 */
const FirstValueWithin = z.strictObject({
  kind: z.literal('first-value-within'),
  keys: Keys,
  op: Comparison.optional(),
  value: z.number().optional(),
  lookbackMinutes: Minutes.optional(),
  notBefore: Predicate.optional(),
  /** Plain words for the event, used in explanations: "first antibiotic". */
  event: z.string().min(1).max(80),
});

/**
 * Met when the first `key` mark (from its lookback) comes before the first of `beforeKeys`
 * (from its own lookback). Missed as soon as one of `beforeKeys` comes first.
 */
const MarkBefore = z.strictObject({
  kind: z.literal('mark-before'),
  key: MeasureKey,
  beforeKeys: Keys,
  lookbackMinutes: Minutes.optional(),
  beforeLookbackMinutes: Minutes.optional(),
  /** Whether a mark charted at the same minute as the other event counts as before it. */
  sameTimeCounts: z.boolean(),
  event: z.string().min(1).max(80),
  beforeEvent: z.string().min(1).max(80),
});

/**
 * Crystalloid per kg of dosing weight. `completed`: met at the row where the running total from
 * the lookback on reaches `mlPerKg` × weight. `started`: met at the first row with any volume.
 */
const VolumePerKgWithin = z.strictObject({
  kind: z.literal('volume-per-kg-within'),
  key: MeasureKey,
  mlPerKg: z.number().positive(),
  satisfiedBy: z.enum(['started', 'completed']),
  lookbackMinutes: Minutes.optional(),
});

/** Met at the first value of `key` charted after the initial one (initial counted from the lookback). */
const RepeatValueWithin = z.strictObject({
  kind: z.literal('repeat-value-within'),
  key: MeasureKey,
  lookbackMinutes: Minutes.optional(),
  event: z.string().min(1).max(80),
});

/** A value is in range when `min <= value <= max` (either bound optional). */
const RangeTest = z.strictObject({ kind: z.literal('range'), min: z.number().optional(), max: z.number().optional() });
/** A value is in range when it is at least `minDropPct` % below the first value in the window. */
const DropTest = z.strictObject({ kind: z.literal('drop-from-first'), minDropPct: z.number().min(0).max(100) });
export const TargetTest = z.discriminatedUnion('kind', [RangeTest, DropTest]);
export type TargetTest = z.infer<typeof TargetTest>;

/**
 * A standing target on a measure (charted or derived). Values count from time zero (minus the
 * lookback) or from the moment the goal's condition arose. With a deadline the target must first
 * be reached by then.
 */
const Target = z.strictObject({
  kind: z.literal('target'),
  key: MeasureKey,
  test: TargetTest,
  from: z.enum(['time-zero', 'condition']),
  lookbackMinutes: Minutes.optional(),
  /**
   * How a value covers time for the share in range: `until-next` (a reading holds until the next
   * one) or `since-previous-row` (an interval measure such as urine per kg per hour describes the
   * interval that ends at its row).
   */
  valueCovers: z.enum(['until-next', 'since-previous-row']).optional(),
});

export const Rule = z.discriminatedUnion('kind', [FirstValueWithin, MarkBefore, VolumePerKgWithin, RepeatValueWithin, Target]);
export type Rule = z.infer<typeof Rule>;
export type RuleKind = Rule['kind'];

/** Where a deadline is counted from: time zero, the moment the goal's condition arose, or another condition. */
export const DeadlineFrom = z.union([
  z.literal('time-zero'),
  z.literal('condition'),
  z.strictObject({ when: Predicate, text: z.string().min(1).max(120) }),
]);
export type DeadlineFrom = z.infer<typeof DeadlineFrom>;

export const Deadline = z.strictObject({
  minutes: Minutes,
  from: DeadlineFrom,
});
export type Deadline = z.infer<typeof Deadline>;

export const GoalDef = z.strictObject({
  /** Goal id inside its set (`antibiotics`); the full id is `set.goal`. */
  id: z.string().regex(/^[a-z][a-z0-9-]{0,39}$/),
  /** Our own plain words. */
  label: z.string().min(1).max(120),
  /** Published source (citation and reference-file section). */
  source: z.string().min(1).max(400),
  /** Version of the source the rule follows. */
  version: z.string().min(1).max(80),
  /** Plain words for when the goal applies. */
  appliesWhen: z.string().min(1).max(200),
  condition: Predicate,
  rule: Rule,
  deadline: Deadline.optional(),
  /** A choice Tidemark made where the source is open or sources disagree; shown in the app. */
  decision: z.string().max(1000).optional(),
});
export type GoalDef = z.infer<typeof GoalDef>;

export const GoalSetDef = z
  .strictObject({
    id: z.string().regex(/^[a-z][a-z0-9-]{0,39}$/),
    /** Version of the published source, e.g. "2018" or "v5.3". */
    version: z.string().min(1).max(40),
    title: z.string().min(1).max(120),
    source: z.string().min(1).max(400),
    goals: z.array(GoalDef).min(1).max(50),
  })
  .refine((s) => new Set(s.goals.map((g) => g.id)).size === s.goals.length, {
    error: 'goal ids within a set must be unique',
    path: ['goals'],
  });
export type GoalSetDef = z.infer<typeof GoalSetDef>;

/** Statuses (design.md, Goals). */
export const GoalStatusKind = z.enum(['met', 'pending', 'missed', 'not-applicable', 'no-data']);
export type GoalStatusKind = z.infer<typeof GoalStatusKind>;
