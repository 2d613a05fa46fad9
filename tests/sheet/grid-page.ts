// Wires the fixture into <tm-grid> on the test-only page, applying events with the pure
// commands so the page behaves like the app (fictional data only).
import '../../src/sheet/tm-grid.js';
import { FixedClock } from '../../src/sheet/clock.js';
import { deriveWorksheet } from '../../src/sheet/derived.js';
import type { Worksheet } from '../../src/sheet/model.js';
import { addRow, deleteRow, setCells, setColumns, setRowTime, type Ctx } from '../../src/sheet/worksheet.js';
import { FIXTURE_NOW, gridFixture } from './grid-fixture.js';

const grid = document.querySelector('tm-grid')!;
const ctx: Ctx = { clock: new FixedClock(FIXTURE_NOW) };
let ws: Worksheet = gridFixture();

function show(next: Worksheet): void {
  ws = next;
  grid.worksheet = ws;
  grid.derived = deriveWorksheet(ws);
}

const params = new URLSearchParams(location.search);
// ?rows=N adds N more rows (every 5 minutes) to measure a long worksheet.
const extra = Number(params.get('rows') ?? 0);
for (let i = 0; i < extra; i += 1) {
  ws = addRow(ctx, ws, new Date(FIXTURE_NOW + (i + 1) * 300_000).toISOString(), 60, {
    hr: { value: 80 + (i % 40) },
    map: { value: 70 + (i % 15) },
    sbp: { value: 110 },
    dbp: { value: 60 },
  }).worksheet;
}
grid.now = FIXTURE_NOW;
show(ws);
if (params.has('status')) {
  const rows = ws.rows;
  grid.highlightRows = new Set([rows[1]!.id]);
  grid.pending = new Map([
    [`${rows[3]!.id}:lactate`, 'saving'],
    [`${rows[3]!.id}:hr`, 'failed'],
  ]);
}
grid.addEventListener('tm-edit', (e) => show(setCells(ctx, ws, e.detail.edits).worksheet));
grid.addEventListener('tm-add-row', (e) => show(addRow(ctx, ws, e.detail.time, e.detail.offset).worksheet));
grid.addEventListener('tm-row-time', (e) => show(setRowTime(ctx, ws, e.detail.rowId, e.detail.time, e.detail.offset).worksheet));
grid.addEventListener('tm-delete-row', (e) => show(deleteRow(ctx, ws, e.detail.rowId).worksheet));
grid.addEventListener('tm-columns', (e) => show(setColumns(ctx, ws, e.detail.columns).worksheet));
grid.addEventListener('tm-paste', (e) => {
  let next = ws;
  for (const r of e.detail.newRows) next = addRow(ctx, next, r.time, r.offset, r.cells).worksheet;
  show(setCells(ctx, next, e.detail.edits).worksheet);
});
