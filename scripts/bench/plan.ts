/**
 * The edits every benchmark makes, the same in Node and in the browser: spread over the whole
 * worksheet (a low-discrepancy sequence, so early rows, whose running totals reach every later
 * row, are edited as often as the newest ones), rotating over measures with different reach
 * (row-local, score window, running totals, carried-forward infusions). Values are typed as a
 * person would and never equal what the long worksheet already holds, so every edit changes a cell.
 */
import type { Cell, Worksheet } from '../../src/sheet/model.js';

export interface PlannedEdit {
  rowIndex: number;
  key: string;
  /** What is typed into the cell. */
  text: string;
  /** The canonical cell it stores. */
  cell: Cell;
}

/** Measures edited, in turn. Their reach (derived.ts header): row + 24 h window, row, to the end... */
export const EDIT_KEYS = ['hr', 'map', 'lactate', 'uo_ml', 'fluid_ml', 'norepinephrine'] as const;

function valueFor(key: (typeof EDIT_KEYS)[number], k: number): number {
  switch (key) {
    case 'hr':
      return 60 + (k % 25); // long worksheet: 90–118
    case 'map':
      return 80 + (k % 10); // long worksheet: ≤ 77
    case 'lactate':
      return 6 + (k % 9) / 10; // long worksheet: ≤ 4.5
    case 'uo_ml':
      return 31 + (k % 9); // long worksheet: 10–20
    case 'fluid_ml':
      return 250 + 10 * (k % 5); // long worksheet: 500 or empty
    case 'norepinephrine':
      return Math.round((0.2 + (k % 9) / 100) * 100) / 100; // long worksheet: ≤ 0.12
  }
}

/** `count` edits of a worksheet of `rows` rows; no cell is edited twice. */
export function editPlan(rows: number, count: number): PlannedEdit[] {
  const out: PlannedEdit[] = [];
  const seen = new Set<string>();
  const golden = (Math.sqrt(5) - 1) / 2;
  for (let k = 0; out.length < count && k < count * 20; k++) {
    const rowIndex = Math.min(rows - 1, Math.floor(((k * golden + 0.5) % 1) * rows));
    const key = EDIT_KEYS[out.length % EDIT_KEYS.length]!;
    if (seen.has(`${rowIndex}:${key}`)) continue;
    seen.add(`${rowIndex}:${key}`);
    const value = valueFor(key, out.length);
    out.push({ rowIndex, key, text: String(value), cell: { value } });
  }
  return out;
}

/** The row id an edit applies to in a worksheet (rows in time order). */
export function rowIdOf(ws: Worksheet, edit: PlannedEdit): string {
  return ws.rows[edit.rowIndex]!.id;
}
