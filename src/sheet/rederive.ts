/**
 * The derivation of a worksheet's next version from the derivation of its previous one: what the
 * app runs after every change, so a cell edit recomputes only the rows it can reach
 * (`updateDerived`, rules in derived.ts) instead of every derived measure and score of every row.
 *
 * `rederive(prev, before, after)` finds the cells whose value differs between the two versions
 * (rows unchanged by identity are skipped, so this is a pass over row references plus the edited
 * rows) and applies `updateDerived` for each. Anything else — rows added, deleted or moved, facts,
 * user columns or options changed, or more than {@link MAX_INCREMENTAL_CHANGES} cells at once —
 * falls back to `deriveAll`. The result always equals `deriveAll(after, options)` (tested).
 *
 * Pure: no DOM, no wall clock.
 */
import { basisOf, deriveAll, updateDerived, type CellChange, type DeriveOptions, type Derivation } from './derived.js';
import type { Cell, Worksheet } from './model.js';

/** More changed cells than this (a large paste) are recomputed in one full pass instead. */
export const MAX_INCREMENTAL_CHANGES = 24;

/** Only a cell's value feeds derived measures and scores (its typed text, note and flag do not). */
function sameValue(a: Cell | undefined, b: Cell | undefined): boolean {
  return a === b || (a !== undefined && b !== undefined && a.value === b.value);
}

/**
 * The cells whose value differs between two versions with the same rows (same ids and times, in
 * the same order), in row order; undefined when the rows themselves differ or more than `limit`
 * cells changed.
 */
export function changedCells(before: Worksheet, after: Worksheet, limit = MAX_INCREMENTAL_CHANGES): CellChange[] | undefined {
  const a = before.rows;
  const b = after.rows;
  if (a.length !== b.length) return undefined;
  const out: CellChange[] = [];
  for (let i = 0; i < b.length; i++) {
    const x = a[i]!;
    const y = b[i]!;
    if (x === y) continue;
    if (x.id !== y.id || x.time !== y.time) return undefined;
    if (x.cells === y.cells) continue;
    for (const key of Object.keys(y.cells)) {
      if (!sameValue(x.cells[key], y.cells[key])) out.push({ rowIndex: i, key });
    }
    for (const key of Object.keys(x.cells)) {
      if (y.cells[key] === undefined) out.push({ rowIndex: i, key });
    }
    if (out.length > limit) return undefined;
  }
  return out;
}

/**
 * Equals `deriveAll(after, options)`, computed from `prev` (the derivation of `before` with the
 * same options) where the change allows it.
 */
export function rederive(
  prev: Derivation | undefined,
  before: Worksheet | undefined,
  after: Worksheet,
  options: DeriveOptions = {},
): Derivation {
  if (!prev || !before || prev.basis !== basisOf(after, options)) return deriveAll(after, options);
  if (before === after) return prev;
  const changes = changedCells(before, after);
  if (!changes) return deriveAll(after, options);
  let next = prev;
  for (const change of changes) next = updateDerived(next, after, change, options);
  return next;
}
