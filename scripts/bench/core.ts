/**
 * Core benchmark (pure, runs in Node and in a browser): the recompute after one cell edit as the
 * app does it — `rederive` (only the rows the edit reaches) then the goal engine over those
 * derived values — against a naive full re-evaluation of every derived measure, score and goal
 * (`deriveAll` then the same goal engine), both on the same edited worksheet, measured side by
 * side in the same run and in alternating order. Each edit builds on the previous one, as in the
 * app. After the first edit of each size the two results are compared, so the fast path cannot
 * win by computing something else.
 */
import { FixedClock } from '../../src/sheet/clock.js';
import { deriveAll, type Derivation } from '../../src/sheet/derived.js';
import { rederive } from '../../src/sheet/rederive.js';
import { setCells } from '../../src/sheet/worksheet.js';
import { evaluate, worksheetSetIds } from '../../src/goals/engine.js';
import { longWorksheet, longWorksheetNow } from './long-worksheet.js';
import { editPlan, rowIdOf } from './plan.js';

export { editPlan } from './plan.js';

export interface CoreSizeResult {
  rows: number;
  edits: number;
  /** Per edit, ms: rederive + goals. */
  incrementalMs: number[];
  /** Per edit, ms: deriveAll + goals. */
  naiveMs: number[];
  /** The same goal statuses and derived rows from both paths (checked on the first edit). */
  agree: boolean;
}

export interface CoreBenchOptions {
  sizes: readonly number[];
  /** Edits per size (default 30). */
  edits?: (rows: number) => number;
  /** Called after each size, for progress output. */
  onSize?: (r: CoreSizeResult) => void;
}

export function coreBench(options: CoreBenchOptions): CoreSizeResult[] {
  const out: CoreSizeResult[] = [];
  for (const rows of options.sizes) {
    let ws = longWorksheet({ rows });
    const now = longWorksheetNow(ws);
    const ctx = { clock: new FixedClock(now) };
    const setIds = worksheetSetIds(ws);
    let derivation: Derivation = deriveAll(ws);
    // One untimed round so both paths run warm code.
    evaluate(ws, setIds, now, { derived: derivation.rows });
    const plan = editPlan(rows, options.edits?.(rows) ?? 30);
    const result: CoreSizeResult = { rows, edits: plan.length, incrementalMs: [], naiveMs: [], agree: true };
    plan.forEach((edit, k) => {
      const next = setCells(ctx, ws, [{ rowId: rowIdOf(ws, edit), key: edit.key, cell: edit.cell }]).worksheet;
      let fast: Derivation | undefined;
      let fastGoals: unknown;
      let slow: Derivation | undefined;
      let slowGoals: unknown;
      const runFast = () => {
        const t = performance.now();
        fast = rederive(derivation, ws, next);
        fastGoals = evaluate(next, setIds, now, { derived: fast.rows });
        result.incrementalMs.push(performance.now() - t);
      };
      const runSlow = () => {
        const t = performance.now();
        slow = deriveAll(next);
        slowGoals = evaluate(next, setIds, now, { derived: slow.rows });
        result.naiveMs.push(performance.now() - t);
      };
      if (k % 2 === 0) {
        runFast();
        runSlow();
      } else {
        runSlow();
        runFast();
      }
      if (k === 0) {
        result.agree = JSON.stringify(fast!.rows) === JSON.stringify(slow!.rows) && JSON.stringify(fastGoals) === JSON.stringify(slowGoals);
      }
      ws = next;
      derivation = fast!;
    });
    options.onSize?.(result);
    out.push(result);
  }
  return out;
}
