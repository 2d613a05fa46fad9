/**
 * What the printout shows of the worksheet's values (pure): the charted measures, then the derived
 * values present in any row, in column groups that fit a portrait page.
 */
import { chartedKeys } from '../export/csv.js';
import { DERIVED_DEFS, SCORE_DEFS, type DerivedRow } from '../sheet/derived.js';
import { MEASURES } from '../sheet/measures.js';
import type { Worksheet } from '../sheet/model.js';

/** Columns per printed table: what fits a portrait page at a readable size. */
export const PRINT_COLUMNS_PER_TABLE = 9;

export interface PrintColumn {
  key: string;
  header: string;
  unit: string;
  derived: boolean;
}

/** Charted measures, then derived values present in any row, grouped for the page width. */
export function printColumns(ws: Worksheet, derived: readonly DerivedRow[]): PrintColumn[][] {
  const cols: PrintColumn[] = chartedKeys(ws)
    .filter((k) => k !== 'note')
    .map((k) => {
      const d = MEASURES.get(k);
      return { key: k, header: d?.short ?? k, unit: d?.unit?.label ?? '', derived: false };
    });
  const present = new Set(derived.flatMap((r) => Object.keys(r.values)));
  for (const d of [...DERIVED_DEFS, ...SCORE_DEFS]) {
    if (present.has(d.key) && !cols.some((c) => c.key === d.key))
      cols.push({ key: d.key, header: d.short, unit: d.unitLabel, derived: true });
  }
  for (const c of ws.derivedColumns) if (present.has(c.key)) cols.push({ key: c.key, header: c.label, unit: c.unit ?? '', derived: true });
  const groups: PrintColumn[][] = [];
  for (let i = 0; i < cols.length; i += PRINT_COLUMNS_PER_TABLE) groups.push(cols.slice(i, i + PRINT_COLUMNS_PER_TABLE));
  return groups;
}
