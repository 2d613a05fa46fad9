/**
 * The benchmark's helper page, served next to the production build (same origin, same strict
 * CSP) and driven by scripts/bench.mjs through `window.tidemarkBench`:
 * - `seed`: writes fictional long worksheets into the app's own notebook database, as an import
 *   would (one `putAll` per batch), and sets which one the app opens;
 * - `commitLatency`: times `store.commit` of single-cell edits (validation, one readwrite
 *   transaction, `tx.done`) on a worksheet of a given size, in a database of its own.
 * No DOM work: the app itself is measured on its own page.
 */
import '../../src/app/zod-setup.js';
import { FixedClock } from '../../src/sheet/clock.js';
import { setCells } from '../../src/sheet/worksheet.js';
import { openStore } from '../../src/storage/store.js';
import { longWorksheet, longWorksheetNow } from './long-worksheet.js';
import { editPlan, rowIdOf } from './plan.js';

const DAY_MS = 86_400_000;

async function seed(options: { worksheets: number; rows: number; batch?: number }): Promise<{ ids: string[]; ms: number }> {
  const started = performance.now();
  const store = await openStore({ broadcast: false });
  const ids: string[] = [];
  const batch = options.batch ?? 10;
  const base = Date.parse('2026-01-01T08:00:00.000Z');
  for (let i = 0; i < options.worksheets; i += batch) {
    const list = [];
    for (let j = i; j < Math.min(options.worksheets, i + batch); j++) {
      list.push(longWorksheet({ rows: options.rows, index: j, t0Ms: base + j * DAY_MS }));
    }
    const r = await store.putAll(list, { replace: true });
    if (!r.ok) throw new Error(`seeding failed: ${r.message}`);
    ids.push(...list.map((w) => w.id));
  }
  // A returning user: the demo was seeded long ago, and the newest worksheet was the last one open.
  await store.setMeta('demoSeeded', true);
  await store.setMeta('lastOpen', ids[ids.length - 1]);
  store.close();
  return { ids, ms: performance.now() - started };
}

async function commitLatency(options: { rows: number; commits: number }): Promise<number[]> {
  const name = `tidemark-bench-commit-${options.rows}-${Math.round(performance.now())}`;
  const store = await openStore({ name, broadcast: false });
  let ws = longWorksheet({ rows: options.rows });
  const created = await store.create(ws);
  if (!created.ok) throw new Error(`could not create: ${created.message}`);
  const ctx = { clock: new FixedClock(longWorksheetNow(ws)) };
  const times: number[] = [];
  for (const edit of editPlan(options.rows, options.commits)) {
    const change = setCells(ctx, ws, [{ rowId: rowIdOf(ws, edit), key: edit.key, cell: edit.cell }]);
    const t = performance.now();
    const r = await store.commit(change, ws.rev);
    times.push(performance.now() - t);
    if (!r.ok) throw new Error(`commit failed: ${r.message}`);
    ws = change.worksheet;
  }
  store.close();
  await new Promise<void>((resolve) => {
    const req = indexedDB.deleteDatabase(name);
    req.onsuccess = req.onerror = req.onblocked = () => resolve();
  });
  return times;
}

(globalThis as unknown as { tidemarkBench: unknown }).tidemarkBench = { seed, commitLatency };
document.title = 'Tidemark bench helper (ready)';
