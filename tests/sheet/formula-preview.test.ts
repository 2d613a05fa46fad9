// Drafts, checks and previews behind <tm-derived-columns> and <tm-custom-goals>. Invented values only.
import { describe, expect, it } from 'vitest';
import { deriveAll } from '../../src/sheet/derived.js';
import {
  baseDerivation,
  caretView,
  checkColumns,
  checkFormula,
  checkGoals,
  columnKeyProblem,
  evaluateFormulaOnRows,
  formatPreviewNumber,
  formulaVocabulary,
  goalDerivation,
  goalIdFromLabel,
  goalProblems,
  outcomeSummary,
  parseDeadline,
  previewColumns,
  resolvedGoalIds,
  type ColumnDraft,
  type GoalDraft,
} from '../../src/sheet/formula-preview.js';
import { MEASURE_KEYS } from '../../src/sheet/measures.js';
import { worksheet } from './sheet-fixture.js';

const draft = (key: string, expression: string, label = key, unit = ''): ColumnDraft => ({ key, label, expression, unit });
const goal = (g: Partial<GoalDraft>): GoalDraft => ({ id: '', label: 'A goal', condition: '', target: 'map >= 65', deadline: '', ...g });

// Rows at 08:00, 08:40, 09:10, 09:40 (UTC, worksheet offset 0); time zero 08:00.
const WS = worksheet({
  weightKg: 70,
  timeZeroMin: 0,
  rows: [
    { min: 0, cells: { hr: 120, sbp: 80, dbp: 50, lactate: 4.2 } },
    { min: 40, cells: { hr: 110, sbp: 90, dbp: 55, fluid_ml: 1000 } },
    { min: 70, cells: { hr: 100, sbp: 100, dbp: 60, lactate: 2.9, fluid_ml: 1100 } },
    { min: 100, cells: { hr: 96, dbp: 62 } },
  ],
});

describe('caretView', () => {
  it('puts the caret under the character at a 1-based position', () => {
    const v = caretView('hr +* 2', 5);
    expect(v.line).toBe('hr +* 2');
    expect(v.caret).toBe('    ^');
    expect(v.char).toBe('*');
  });

  it('points just past the end for a formula that stops too early', () => {
    const v = caretView('hr / ', 6);
    expect(v.caret.length).toBe(6);
    expect(v.char).toBe('');
  });

  it('cuts a long formula to a window around the position, caret still under the character', () => {
    const text = `${'a + '.repeat(40)}#x${' + b'.repeat(40)}`;
    const pos = text.indexOf('#') + 1;
    const v = caretView(text, pos, 10);
    expect(v.line.startsWith('…')).toBe(true);
    expect(v.line.endsWith('…')).toBe(true);
    expect(v.line.charAt(v.caret.length - 1)).toBe('#');
  });
});

describe('formatPreviewNumber', () => {
  it('shows up to 3 decimals without trailing zeros', () => {
    expect(formatPreviewNumber(110 / 90)).toBe('1.222');
    expect(formatPreviewNumber(1.5)).toBe('1.5');
    expect(formatPreviewNumber(65)).toBe('65');
    expect(formatPreviewNumber(-0.0001)).toBe('0');
  });
});

describe('previewColumns', () => {
  it('previews a shock index column as HR / SBP at each row, and says why a row has none', () => {
    const p = previewColumns(WS, baseDerivation(WS), [draft('si', 'hr / sbp', 'Shock index (mine)')]);
    expect(p.problems).toEqual([{}]);
    const rows = p.rows[0]!;
    // Shock index = HR / SBP (common practice, no source), computed here from the fixture values.
    expect(rows.map((r) => r.value)).toEqual(
      [120 / 80, 110 / 90, 100 / 100, undefined].map((x) => (x === undefined ? undefined : Number(x.toPrecision(12)))),
    );
    expect(rows.map((r) => r.clock)).toEqual(['08:00', '08:40', '09:10', '09:40']);
    expect(rows[3]!.kind).toBe('none');
    expect(rows[3]!.text).toBe('needs sbp');
  });

  it('gives the same values as deriveAll with the drafts saved (columns reading columns, helpers, facts)', () => {
    const drafts = [
      draft('b', 'a * 2 + (prev(lactate) ?? 0)'),
      draft('a', 'fluid_total_ml / weight'),
      draft('c', 'has(lactate) ? lactate - first(lactate) : 0'),
      draft('d', 'running_sum(fluid_ml) + hours_since_t0()'),
    ];
    const p = previewColumns(WS, baseDerivation(WS), drafts);
    const full = deriveAll({ ...WS, derivedColumns: drafts.map((d) => ({ key: d.key, label: d.label, expression: d.expression })) });
    drafts.forEach((d, k) => {
      const expected = full.rows.map((r) => r.values[d.key]);
      expect(
        p.rows[k]!.map((o) => o.value),
        d.key,
      ).toEqual(expected);
    });
    // a = crystalloid since time zero / 70 kg: (0, 1000, 2100, 2100) / 70, by hand from the fixture.
    expect(p.rows[1]!.map((o) => o.value)).toEqual([0, 1000 / 70, 2100 / 70, 2100 / 70].map((x) => Number(x.toPrecision(12))));
  });

  it('names a dependency loop a → b → a at both columns and saves nothing', () => {
    const drafts = [draft('a', 'b + 1'), draft('b', 'a + 1')];
    const p = previewColumns(WS, baseDerivation(WS), drafts);
    expect(p.problems[0]!.expression!.message).toContain('a → b → a');
    expect(p.problems[1]!.expression!.message).toContain('a → b → a');
    expect(checkColumns(p, drafts).ok).toBe(false);
  });

  it('refuses a key that is a measure key, a built-in derived key, badly formed, or used twice', () => {
    expect(columnKeyProblem('map', [])).toMatch(/already a charted measure/);
    expect(columnKeyProblem('lactate', [])).toMatch(/already a charted measure/);
    expect(columnKeyProblem('shock_index', [])).toMatch(/already a built-in derived measure/);
    expect(columnKeyProblem('weight', [])).toMatch(/worksheet fact/);
    expect(columnKeyProblem('Si', [])).toMatch(/lower-case/);
    expect(columnKeyProblem('my col', [])).toMatch(/no spaces/);
    expect(columnKeyProblem('', [])).toMatch(/Give the column a key/);
    expect(columnKeyProblem('si', ['si'])).toMatch(/already uses the key "si"/);
    // Every measure key is refused.
    for (const k of MEASURE_KEYS) expect(columnKeyProblem(k, []), k).toBeDefined();
    const p = previewColumns(WS, baseDerivation(WS), [draft('si', 'hr / sbp'), draft('si', 'hr')]);
    expect(p.problems[0]).toEqual({});
    expect(p.problems[1]!.key!.message).toMatch(/already uses the key "si"/);
    // The draft with a refused key is still previewed.
    expect(p.rows[1]![0]!.value).toBe(120);
  });

  it('refuses forbidden constructs with a position (mathjs security notes: import, function definition, property access)', () => {
    for (const [text, pos] of [
      ['import("x")', 1],
      ['f(x)=x', 5],
      ['cos.constructor', 4],
    ] as const) {
      const p = previewColumns(WS, baseDerivation(WS), [draft('x', text)]);
      expect(p.problems[0]!.expression!.position, text).toBe(pos);
      expect(p.rows[0]).toBeUndefined();
    }
  });

  it('saves trimmed columns, with the unit only when given', () => {
    const drafts = [draft(' si ', ' hr / sbp ', ' Shock index '), draft('pp2', 'sbp - dbp', 'Pulse pressure', 'mmHg')];
    const r = checkColumns(previewColumns(WS, baseDerivation(WS), drafts), drafts);
    expect(r).toEqual({
      ok: true,
      columns: [
        { key: 'si', label: 'Shock index', expression: 'hr / sbp' },
        { key: 'pp2', label: 'Pulse pressure', expression: 'sbp - dbp', unit: 'mmHg' },
      ],
    });
  });

  it('asks for a label and a formula', () => {
    const p = previewColumns(WS, baseDerivation(WS), [draft('si', '', '')]);
    expect(p.problems[0]!.label!.message).toMatch(/label/);
    expect(p.problems[0]!.expression!.message).toMatch(/Write the formula/);
  });
});

describe('own goals', () => {
  it('makes an id from the label, unique among the goals', () => {
    expect(goalIdFromLabel('MAP ≥ 65 by 6 h')).toBe('map-65-by-6-h');
    expect(goalIdFromLabel('Lactate < 2 mmol/L')).toBe('lactate-2-mmol-l');
    expect(goalIdFromLabel('6 h re-check')).toBe('goal-6-h-re-check');
    expect(goalIdFromLabel('≥≥')).toBe('goal');
    expect(goalIdFromLabel('Urine', ['urine'])).toBe('urine-2');
    expect(goalIdFromLabel('x'.repeat(60)).length).toBe(40);
    expect(resolvedGoalIds([goal({ label: 'Urine' }), goal({ label: 'Urine' }), goal({ id: 'urine-2', label: 'Other' })])).toEqual([
      'urine',
      'urine-3',
      'urine-2',
    ]);
  });

  it('reads the deadline as whole minutes from time zero, up to 7 days', () => {
    expect(parseDeadline('')).toEqual({ ok: true, minutes: undefined });
    expect(parseDeadline(' 180 ')).toEqual({ ok: true, minutes: 180 });
    expect(parseDeadline('1.5').ok).toBe(false);
    expect(parseDeadline('-3').ok).toBe(false);
    expect(parseDeadline('10081').ok).toBe(false);
    expect(parseDeadline('10080')).toEqual({ ok: true, minutes: 10080 });
  });

  it('says what is wrong in each field, with the position for formulas', () => {
    const [p] = goalProblems([goal({ label: '', id: 'Bad Id', condition: 'lactate >', target: 'map >= ', deadline: 'soon' })], []);
    expect(p!.label!.message).toMatch(/label/);
    expect(p!.id!.message).toMatch(/lower-case/);
    expect(p!.condition!.position).toBe(10);
    expect(p!.target!.position).toBe(8);
    expect(p!.deadline!.message).toMatch(/whole minutes/);
  });

  it('accepts the worksheet own column keys in goal formulas', () => {
    expect(checkFormula('si < 1', []).ok).toBe(false);
    expect(checkFormula('si < 1', ['si']).ok).toBe(true);
  });

  it('saves goals with generated ids and optional parts left out', () => {
    const r = checkGoals(
      [
        goal({ label: 'MAP at least 65', target: 'map >= 65' }),
        goal({ label: 'Lactate down', condition: 'first(lactate) > 2', target: 'lactate < 2', deadline: '360' }),
      ],
      [],
    );
    expect(r).toEqual({
      ok: true,
      goals: [
        { id: 'map-at-least-65', label: 'MAP at least 65', target: 'map >= 65' },
        { id: 'lactate-down', label: 'Lactate down', condition: 'first(lactate) > 2', target: 'lactate < 2', deadlineMinutes: 360 },
      ],
    });
  });

  it('evaluates a target at each row and sums it up in one line', () => {
    const c = checkFormula('sbp >= 90', []);
    if (!c.ok) throw new Error(c.problem.message);
    const out = evaluateFormulaOnRows(WS, goalDerivation(WS), c.formula);
    // 80, 90, 100, none: compared by hand with 90.
    expect(out.map((o) => o.text)).toEqual(['false', 'true', 'true', 'needs sbp']);
    expect(outcomeSummary(out)).toBe('false at 08:00; true at 08:40 to 09:10 (2 rows); needs sbp at 09:40');
    expect(outcomeSummary(out, 2)).toBe('…; true at 08:40 to 09:10 (2 rows); needs sbp at 09:40');
  });

  it('marks rows before time zero', () => {
    const ws = worksheet({
      timeZeroMin: 30,
      rows: [
        { min: 0, cells: { map: 60 } },
        { min: 40, cells: { map: 70 } },
      ],
    });
    const c = checkFormula('map >= 65', []);
    if (!c.ok) throw new Error(c.problem.message);
    expect(evaluateFormulaOnRows(ws, goalDerivation(ws), c.formula).map((o) => o.beforeTimeZero)).toEqual([true, false]);
  });
});

describe('formulaVocabulary', () => {
  it('lists every measure key, the facts, the helpers and the functions, and the worksheet own columns', () => {
    const groups = formulaVocabulary([{ key: 'si', label: 'Shock index (mine)' }]);
    const names = groups.flatMap((g) => g.items.map((i) => i.name));
    for (const k of MEASURE_KEYS) expect(names).toContain(k);
    for (const n of ['shock_index', 'sofa', 'si', 'dosing_weight', 'prev(key)', 'hours_since_t0()', 'sqrt()']) expect(names).toContain(n);
  });
});
