// Paste planner. Outside references: RFC 4180 (quoting in delimited text), the text/plain
// clipboard format spreadsheets write (tab between values, newline between rows, a trailing
// newline: common practice, no source), published figures from
// /work/shared/reference/clinical-check-values.md where a value's meaning matters.
import { describe, expect, it } from 'vitest';
import { FixedClock } from '../../src/sheet/clock.js';
import { MEASURES } from '../../src/sheet/measures.js';
import type { Worksheet } from '../../src/sheet/model.js';
import { gridColumns, MAX_PASTE_LINES, parseEntered, planPaste, splitDelimited, type PasteTarget } from '../../src/sheet/paste.js';
import { addRow, createWorksheet, setColumns, setDerivedColumns, type Ctx } from '../../src/sheet/worksheet.js';

const REF = Date.parse('2026-03-01T09:00:00Z');

function fixture(): Worksheet {
  let n = 0;
  const c: Ctx = { clock: new FixedClock(REF), newId: () => `r${++n}` };
  let ws = createWorksheet(c, { label: 'Bed 9 (fictional)', displayOffset: 60, weightKg: 80 });
  // Visible: map, sbp, shock_index (calculated), lactate; "zzz" is unknown and skipped.
  ws = setColumns(c, ws, ['map', 'sbp', 'shock_index', 'lactate', 'zzz']).worksheet;
  ws = addRow(c, ws, '2026-03-01T07:00:00.000Z', 60, { map: { value: 62, flag: 'low' } }).worksheet; // 08:00 local
  ws = addRow(c, ws, '2026-03-01T08:00:00.000Z', 60).worksheet; // 09:00 local
  return ws;
}

/** Ids of the fixture's two rows (08:00 and 09:00 local), in time order. */
function ids(ws: Worksheet): [string, string] {
  return [ws.rows[0]!.id, ws.rows[1]!.id];
}

function at(ws: Worksheet, anchorRow: number, anchorCol: number, extra: Partial<PasteTarget> = {}): PasteTarget {
  return { worksheet: ws, anchorRow, anchorCol, referenceMs: REF, ...extra };
}

function plan(text: string, target: PasteTarget) {
  const r = planPaste(text, target);
  if (!r.ok) throw new Error(`expected a plan, got: ${r.error}`);
  return r.plan;
}

describe('splitDelimited (RFC 4180 quoting)', () => {
  it('splits tabs and newlines, drops the trailing newline spreadsheets add', () => {
    expect(splitDelimited('70\t110\n72\t115\n', '\t')).toEqual([
      ['70', '110'],
      ['72', '115'],
    ]);
    expect(splitDelimited('a\r\nb\rc', '\t')).toEqual([['a'], ['b'], ['c']]);
    expect(splitDelimited('a\t\tc', '\t')).toEqual([['a', '', 'c']]);
  });

  it('reads quoted fields with delimiters, newlines and doubled quotes (RFC 4180 §2, rules 5–7)', () => {
    expect(splitDelimited('"a,b",c\r\n"x ""y""",z', ',')).toEqual([
      ['a,b', 'c'],
      ['x "y"', 'z'],
    ]);
    expect(splitDelimited('"line1\nline2"\tv', '\t')).toEqual([['line1\nline2', 'v']]);
  });
});

describe('gridColumns', () => {
  it('keeps known keys in order, marks calculated ones, skips unknown keys and repeats', () => {
    const ws = fixture();
    const cols = gridColumns({ ...ws, columns: [...ws.columns, 'map'] });
    expect(cols.map((c) => `${c.kind}:${c.key}`)).toEqual(['measure:map', 'measure:sbp', 'derived:shock_index', 'measure:lactate']);
    // MAP is charted, and can also be estimated from SBP and DBP when not charted.
    const map = cols[0]!;
    expect(map.kind === 'measure' && map.estimate?.key).toBe('map');
  });

  it("shows the worksheet's own calculated columns", () => {
    let ws = fixture();
    const c: Ctx = { clock: new FixedClock(REF), newId: () => 'x' };
    ws = setDerivedColumns(c, ws, [{ key: 'dp', label: 'Double product', expression: 'hr * sbp' }]).worksheet;
    ws = { ...ws, columns: [...ws.columns, 'dp'] };
    expect(gridColumns(ws).at(-1)).toMatchObject({ kind: 'user', key: 'dp' });
  });
});

describe('planPaste: by position', () => {
  it('fills rows downwards and columns rightwards from the active cell', () => {
    const ws = fixture();
    // Active cell: first row, MAP column (column 1).
    const [first, second] = ids(ws);
    const p = plan('70\t110\n72\t115\n', at(ws, 0, 1));
    expect(p.edits).toEqual([
      { rowId: first, key: 'map', cell: { value: 70 }, input: '70' },
      { rowId: first, key: 'sbp', cell: { value: 110 }, input: '110' },
      { rowId: second, key: 'map', cell: { value: 72 }, input: '72' },
      { rowId: second, key: 'sbp', cell: { value: 115 }, input: '115' },
    ]);
    expect(p.newRows).toEqual([]);
    expect(p.refused).toEqual([]);
    expect(p.layout).toEqual({ delimiter: 'tab', header: false, byTime: false });
  });

  it('refuses values for calculated columns, past the last column and past the last row', () => {
    const ws = fixture();
    // From SBP: sbp, shock_index (calculated), lactate, then nothing.
    const [first, second] = ids(ws);
    const p = plan('100\t0.9\t2.5\t7\n101\n102\n', at(ws, 0, 2));
    expect(p.edits.map((e) => `${e.rowId}:${e.key}=${String(e.cell?.value)}`)).toEqual([
      `${first}:sbp=100`,
      `${first}:lactate=2.5`,
      `${second}:sbp=101`,
    ]);
    expect(p.refused.map((r) => [r.line, r.field, r.input])).toEqual([
      [1, 2, '0.9'],
      [1, 4, '7'],
      [3, 1, '102'],
    ]);
    expect(p.refused[0]!.message).toMatch(/Shock index is calculated/);
    expect(p.refused[1]!.message).toMatch(/Past the last column/);
    expect(p.refused[2]!.message).toMatch(/Past the last row/);
  });

  it('refuses out-of-range values with the range and keeps alarming ones with their warning', () => {
    const ws = fixture();
    // MAP accepted range 15–250 mmHg (catalog). 55 is below the 65 mmHg MAP target
    // (SSC 2021; hour-1 bundle element 5, reference file §1–2): kept and flagged.
    const p = plan('999\n55\n', at(ws, 0, 1));
    expect(p.refused).toHaveLength(1);
    expect(p.refused[0]!.message).toMatch(/outside the accepted range.*15–250 mmHg/);
    expect(p.accepted).toHaveLength(1);
    expect(p.accepted[0]!.cell).toEqual({ value: 55, flag: 'low' });
    expect(p.accepted[0]!.warning).toMatch(/below 65/);
  });

  it('leaves cells alone for empty values and does not count equal values as edits', () => {
    const ws = fixture();
    const p = plan('62\t\t\t\n', at(ws, 0, 1));
    expect(p.edits).toEqual([]);
    expect(p.unchanged).toBe(1);
  });

  it('keeps a decimal comma as one value when there is no header', () => {
    const ws = fixture();
    const p = plan('2,1\n1,8\n', at(ws, 0, 4));
    expect(p.edits.map((e) => e.cell?.value)).toEqual([2.1, 1.8]);
  });

  it('reads bare numbers in the unit on screen (lactate in mg/dL: 1 mmol/L = 9.008 mg/dL, reference file §8)', () => {
    const ws = fixture();
    const mgdl = MEASURES.get('lactate')!.alternates![0]!;
    const p = plan('36\n', at(ws, 0, 4, { displayUnits: new Map([['lactate', mgdl]]) }));
    // 36 mg/dL ≈ 4 mmol/L (Jones 2010 inclusion threshold, reference file §8).
    expect(p.edits[0]!.cell!.value).toBeCloseTo(36 / 9.008, 9);
    expect(p.edits[0]!.input).toBe('36');
  });
});

describe('planPaste: with a header of keys', () => {
  it('maps columns by key and creates rows at the given times, filling a row already at that time', () => {
    const ws = fixture();
    const text = 'time,map,lactate\n2026-03-01T09:30+01:00,68,4.2\n08:00,70,\n';
    const p = plan(text, at(ws, 1, 3));
    expect(p.layout).toEqual({ delimiter: 'comma', header: true, byTime: true });
    // 09:30 at +01:00 is 08:30Z: no row there, so a new one.
    expect(p.newRows).toEqual([
      { time: '2026-03-01T08:30:00.000Z', offset: 60, cells: { map: { value: 68 }, lactate: { value: 4.2, flag: 'high' } } },
    ]);
    // "08:00" on the worksheet's day at +01:00 is 07:00Z: the first row.
    expect(p.edits).toEqual([{ rowId: ids(ws)[0], key: 'map', cell: { value: 70 }, input: '70' }]);
    // Lactate 4.2 is above 4 mmol/L, the hour-1 bundle's fluid threshold (reference file §2): kept and flagged.
    expect(p.accepted.find((a) => a.key === 'lactate')!.warning).toMatch(/above 4/);
  });

  it('fills the same new row from two lines with one time, and refuses a second value for the same cell', () => {
    const ws = fixture();
    const p = plan('time\tmap\tsbp\n10:00\t70\t\n10:00\t71\t120\n', at(ws, 0, 1));
    expect(p.newRows).toEqual([{ time: '2026-03-01T09:00:00.000Z', offset: 60, cells: { map: { value: 70 }, sbp: { value: 120 } } }]);
    expect(p.refused).toHaveLength(1);
    expect(p.refused[0]).toMatchObject({ line: 3, field: 2, key: 'map', input: '71' });
    expect(p.refused[0]!.message).toMatch(/Line 2 of this paste already gives/);
  });

  it('skips a line whose time cannot be read, saying so', () => {
    const ws = fixture();
    const p = plan('time\tmap\nsoon\t70\n25:00\t71\n', at(ws, 0, 1));
    expect(p.newRows).toEqual([]);
    expect(p.refused.map((r) => [r.line, r.input])).toEqual([
      [2, 'soon'],
      [3, '25:00'],
    ]);
    expect(p.refused[0]!.message).toMatch(/whole line is skipped/);
  });

  it('without a time column fills rows from the active row by key', () => {
    const ws = fixture();
    const p = plan('lactate\tmap\n3.1\t66\n', at(ws, 1, 2));
    expect(p.edits).toEqual([
      { rowId: ids(ws)[1], key: 'lactate', cell: { value: 3.1 }, input: '3.1' },
      { rowId: ids(ws)[1], key: 'map', cell: { value: 66 }, input: '66' },
    ]);
  });

  it('refuses values under a calculated key in the header', () => {
    const ws = fixture();
    const p = plan('map\tpulse_pressure\n70\t40\n', at(ws, 0, 1));
    expect(p.edits).toHaveLength(1);
    expect(p.refused[0]).toMatchObject({ key: 'pulse_pressure', input: '40' });
  });

  it('does not take a line with an unknown word for a header', () => {
    const ws = fixture();
    const p = plan('map\tpressure\n', at(ws, 0, 1));
    expect(p.layout.header).toBe(false);
    expect(p.refused).toHaveLength(2); // "map" is not a number; "pressure" is not a number either
  });
});

describe('planPaste: on the time column', () => {
  it('reads the first value as the row time and the rest from the first column', () => {
    const ws = fixture();
    const p = plan('10:15\t68\t118\n', at(ws, 1, 0));
    expect(p.newRows).toEqual([{ time: '2026-03-01T09:15:00.000Z', offset: 60, cells: { map: { value: 68 }, sbp: { value: 118 } } }]);
    expect(p.layout.byTime).toBe(true);
  });

  it('creates no empty row when every value of a line is refused', () => {
    const ws = fixture();
    const p = plan('10:15\t999\n', at(ws, 1, 0));
    expect(p.newRows).toEqual([]);
    expect(p.refused).toHaveLength(1);
  });
});

describe('planPaste: whole-paste refusals', () => {
  it('refuses an empty block and one over the line limit', () => {
    const ws = fixture();
    expect(planPaste('\t\n\n', at(ws, 0, 1))).toMatchObject({ ok: false, error: expect.stringMatching(/nothing to paste/) as unknown });
    const big = Array.from({ length: MAX_PASTE_LINES + 5 }, () => '70').join('\n');
    expect(planPaste(big, at(ws, 0, 1))).toMatchObject({ ok: false, error: expect.stringMatching(/at most 2000/) as unknown });
  });
});

describe('parseEntered', () => {
  it('reads a typed unit as typed, whatever the unit on screen', () => {
    const mgdl = MEASURES.get('lactate')!.alternates![0]!;
    // 2 mmol/L typed with its unit stays 2 mmol/L (reference file §8).
    const r = parseEntered('lactate', '2 mmol/L', mgdl);
    expect(r.ok && r.cell?.value).toBe(2);
  });
});
