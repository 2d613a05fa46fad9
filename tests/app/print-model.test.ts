import { describe, expect, it } from 'vitest';
import { demoWorksheet } from '../../src/app/demo-scenario.js';
import { PRINT_COLUMNS_PER_TABLE, printColumns } from '../../src/app/print-model.js';
import { deriveAll } from '../../src/sheet/derived.js';

describe('printColumns', () => {
  const ws = demoWorksheet(Date.parse('2026-03-01T10:10:00Z'));
  const groups = printColumns(ws, deriveAll(ws).rows);
  const keys = groups.flat().map((c) => c.key);

  it('prints every charted measure except free-text notes, in catalog order', () => {
    const charted = new Set(ws.rows.flatMap((r) => Object.keys(r.cells)));
    for (const k of charted) if (k !== 'note') expect(keys).toContain(k);
    expect(keys).not.toContain('note');
    expect(keys.indexOf('sbp')).toBeLessThan(keys.indexOf('lactate'));
  });

  it('adds the derived values present, marked as derived, after the charted ones', () => {
    // MAP estimate DBP + (SBP - DBP)/3 and urine rate mL/kg/h (reference file §12, §13).
    const uo = groups.flat().find((c) => c.key === 'uo_ml_kg_h');
    expect(uo?.derived).toBe(true);
    expect(uo?.unit).toBe('mL/kg/h');
    expect(keys.indexOf('uo_ml_kg_h')).toBeGreaterThan(keys.indexOf('uo_ml'));
  });

  it('splits the columns into groups that fit a portrait page', () => {
    expect(groups.length).toBeGreaterThan(1);
    for (const g of groups) expect(g.length).toBeLessThanOrEqual(PRINT_COLUMNS_PER_TABLE);
    expect(new Set(keys).size).toBe(keys.length);
  });
});
