/**
 * Drafts, checks and live previews for the worksheet's own formulas: user derived columns
 * (<tm-derived-columns>) and own goals (<tm-custom-goals>). Pure: no DOM, no wall clock.
 *
 * Everything goes through the restricted formula engine (formula-engine.ts) and the derivation
 * in derived.ts, so a preview shows exactly what the grid and the goal panel will show once the
 * drafts are saved:
 * - `previewColumns` evaluates draft columns on top of a derivation of the worksheet without its
 *   own columns (computed once per worksheet version, see `baseDerivation`), in the dependency
 *   order `compileColumns` gives. Its values equal `deriveAll` with the drafts saved (tested).
 * - `evaluateExpression` evaluates a goal's condition or target at every row, with the values,
 *   facts and helpers the goal engine uses (`evaluateAtRows`).
 */
import { formatDateTime } from './time.js';
import { compileColumns, DERIVED_DEFS, deriveAll, evaluateAtRows, SCORE_DEFS, tidy, type ColumnPlan, type Derivation } from './derived.js';
import {
  ALLOWED_FUNCTIONS,
  compileFormula,
  FACTS,
  HELPERS,
  MAX_FORMULA_LENGTH,
  reservedNameReason,
  type CompiledFormula,
  type EvalResult,
} from './formula-engine.js';
import { MEASURE_KEYS, MEASURES } from './measures.js';
import { CustomGoal, DerivedColumn, MeasureKey, type Worksheet } from './model.js';

// --- Messages with a position -------------------------------------------------------------

/** A problem with one field; `position` (1-based character) for formula fields when known. */
export interface FieldProblem {
  message: string;
  position?: number;
}

/** Lines to draw under a formula: the text (or a window of it) and a caret line under the character. */
export interface CaretView {
  /** The text shown (a window around the position for long formulas, with "…" at cut ends). */
  line: string;
  /** Spaces then "^" under the character at the position. */
  caret: string;
  /** The character pointed at ("" at the end of the text). */
  char: string;
}

/**
 * The formula with a caret under the character at `position` (1-based; `text.length + 1` points
 * just past the end). Long formulas are cut to a window of `radius` characters either side.
 */
export function caretView(text: string, position: number, radius = 36): CaretView {
  const flat = text.replace(/[\t\r\n]/g, ' ');
  const index = Math.min(Math.max(0, Math.trunc(position) - 1), flat.length);
  const start = Math.max(0, index - radius);
  const end = Math.min(flat.length, index + radius + 1);
  let line = flat.slice(start, end);
  let offset = index - start;
  if (start > 0) {
    line = `…${line}`;
    offset += 1;
  }
  if (end < flat.length) line = `${line}…`;
  return { line, caret: `${' '.repeat(offset)}^`, char: flat.charAt(index) };
}

// --- Numbers and times for people ---------------------------------------------------------

/** A preview value: up to 3 decimals, no trailing zeros ("1.222", "65", "-0.5"). */
export function formatPreviewNumber(v: number): string {
  if (!Number.isFinite(v)) return String(v);
  const s = (Math.round(v * 1000) / 1000).toFixed(3).replace(/\.?0+$/, '');
  return s === '-0' ? '0' : s;
}

/**
 * Row times for people: "08:40" in the worksheet's offset, or "2026-03-01 08:40" when the day is not
 * the reference day (time zero's, else the first row's), which is worked out once.
 */
function clockFormatter(ws: Worksheet): (iso: string) => string {
  const ref = ws.timeZero?.time ?? ws.rows[0]?.time;
  const refDay = ref ? formatDateTime(ref, ws.displayOffset).slice(0, 10) : undefined;
  return (iso) => {
    const full = formatDateTime(iso, ws.displayOffset);
    return refDay === undefined || full.slice(0, 10) === refDay ? full.slice(11) : full;
  };
}

/** One row's outcome of a formula. */
export interface RowOutcome {
  rowId: string;
  /** UTC ISO. */
  time: string;
  /** Row time for people (see clockFormatter). */
  clock: string;
  kind: 'number' | 'true' | 'false' | 'none';
  /** The number when kind is 'number'. */
  value?: number;
  /** What to show: "1.222", "true", "false", or why there is no value ("needs sbp"). */
  text: string;
  /** The row is earlier than time zero (own goals do not look at it). */
  beforeTimeZero: boolean;
}

function outcomeOf(ws: Worksheet, i: number, r: EvalResult, t0Ms: number | undefined, clock: (iso: string) => string): RowOutcome {
  const row = ws.rows[i]!;
  const base = { rowId: row.id, time: row.time, clock: clock(row.time), beforeTimeZero: t0Ms !== undefined && Date.parse(row.time) < t0Ms };
  if (r.ok) {
    if (typeof r.value === 'boolean') return { ...base, kind: r.value ? 'true' : 'false', text: r.value ? 'true' : 'false' };
    const value = tidy(r.value);
    return { ...base, kind: 'number', value, text: formatPreviewNumber(value) };
  }
  return { ...base, kind: 'none', text: r.missing ? `needs ${r.missing.join(', ')}` : (r.error ?? 'cannot be worked out') };
}

/** The worksheet with its rows in time order (commands keep them sorted; this guards input from elsewhere). */
function timeOrdered(ws: Worksheet): Worksheet {
  const sorted = ws.rows.every((r, i) => i === 0 || ws.rows[i - 1]!.time <= r.time);
  if (sorted) return ws;
  const rows = ws.rows
    .map((row, i) => ({ row, i }))
    .sort((a, b) => (a.row.time < b.row.time ? -1 : a.row.time > b.row.time ? 1 : a.i - b.i))
    .map((x) => x.row);
  return { ...ws, rows };
}

// --- User derived columns -------------------------------------------------------------------

/** A derived column as typed in the form (every field text). */
export interface ColumnDraft {
  key: string;
  label: string;
  expression: string;
  unit: string;
}

export type ColumnField = keyof ColumnDraft;

export function columnDraftOf(c: DerivedColumn): ColumnDraft {
  return { key: c.key, label: c.label, expression: c.expression, unit: c.unit ?? '' };
}

/**
 * Built-in derived measures and scores of the worksheet, without its own columns: the base the
 * column previews are evaluated on. Compute once per worksheet version (O(rows)).
 */
export function baseDerivation(ws: Worksheet): Derivation {
  return deriveAll({ ...timeOrdered(ws), derivedColumns: [] });
}

/** Why a column key cannot be used, or undefined when it can. `others` are the other drafts' keys. */
export function columnKeyProblem(key: string, others: readonly string[]): string | undefined {
  const k = key.trim();
  if (k === '') return 'Give the column a key: the short name formulas use for it, for example "si_adj".';
  if (!MeasureKey.safeParse(k).success) {
    if (/[A-Z]/.test(k) && MeasureKey.safeParse(k.toLowerCase()).success) return `Use lower-case letters: "${k.toLowerCase()}".`;
    if (k.length > 40) return 'A key is at most 40 characters.';
    return 'A key starts with a lower-case letter and has only lower-case letters, digits and _ (no spaces).';
  }
  const reserved = reservedNameReason(k);
  if (reserved) return `${reserved.charAt(0).toUpperCase()}${reserved.slice(1)}; choose another key for this column.`;
  if (others.includes(k)) return `Another of your columns already uses the key "${k}".`;
  return undefined;
}

export interface ColumnsPreview {
  /** The compiled drafts (keys as they will be saved; a draft with an unusable key is compiled under a stand-in name). */
  plan: ColumnPlan;
  /** Per draft (same order): problems by field. Empty when the draft is valid. */
  problems: Partial<Record<ColumnField, FieldProblem>>[];
  /** Per draft: the outcome at each row (time order), or undefined when it cannot be worked out. */
  rows: (RowOutcome[] | undefined)[];
}

function standIn(i: number): string {
  // Not a name a formula can write, so no formula can read it and it never clashes with a key.
  return `#draft ${i}`;
}

/**
 * Checks every draft and previews them on the worksheet's rows. `base` is `baseDerivation(ws)`.
 * The preview values equal `deriveAll` of the worksheet with the drafts saved.
 */
export function previewColumns(ws: Worksheet, base: Derivation, drafts: readonly ColumnDraft[]): ColumnsPreview {
  const ordered = timeOrdered(ws);
  const keys = drafts.map((d) => d.key.trim());
  const problems: Partial<Record<ColumnField, FieldProblem>>[] = drafts.map(() => ({}));
  const compiledKeys: string[] = [];
  drafts.forEach((d, i) => {
    const p = problems[i]!;
    // A key used twice is reported at the later draft; the first keeps it.
    const keyProblem = columnKeyProblem(d.key, keys.slice(0, i));
    if (keyProblem) p.key = { message: keyProblem };
    compiledKeys.push(keyProblem ? standIn(i) : keys[i]!);
    const label = d.label.trim();
    if (label === '') p.label = { message: 'Give the column a label: it heads the column in the worksheet.' };
    else if (label.length > 80) p.label = { message: `The label is ${label.length} characters; the limit is 80.` };
    if (d.unit.trim().length > 40) p.unit = { message: `The unit is ${d.unit.trim().length} characters; the limit is 40.` };
  });
  const columns: DerivedColumn[] = drafts.map((d, i) => ({
    key: compiledKeys[i]!,
    label: d.label.trim() || compiledKeys[i]!,
    expression: d.expression,
  }));
  const plan = compileColumns(columns);
  drafts.forEach((d, i) => {
    const err = plan.errors[compiledKeys[i]!];
    if (d.expression.trim() === '') {
      problems[i]!.expression = { message: 'Write the formula, for example hr / sbp.' };
    } else if (err) {
      problems[i]!.expression = err.position === undefined ? { message: err.message } : { message: err.message, position: err.position };
    }
  });

  // Evaluate the valid columns in order on a copy of the base values.
  const deriv: Derivation = { ...base, rows: base.rows.map((r) => ({ ...r, values: { ...r.values }, gaps: { ...r.gaps } })) };
  const results = new Map<string, EvalResult[]>();
  const sameRows = deriv.rows.length === ordered.rows.length && deriv.rows.every((r, i) => r.rowId === ordered.rows[i]!.id);
  if (sameRows) {
    for (const c of plan.order) {
      const res = evaluateAtRows(ordered, deriv, c.formula);
      res.forEach((r, i) => {
        if (r.ok) deriv.rows[i]!.values[c.column.key] = typeof r.value === 'boolean' ? (r.value ? 1 : 0) : tidy(r.value);
      });
      results.set(c.column.key, res);
    }
  }
  const t0Ms = ws.timeZero ? Date.parse(ws.timeZero.time) : undefined;
  const clock = clockFormatter(ordered);
  const rows = compiledKeys.map((k) => {
    const res = results.get(k);
    if (!res) return undefined;
    return res.map((r, i) => {
      // Columns store true/false as 1/0, as the grid shows them.
      const stored: EvalResult = r.ok && typeof r.value === 'boolean' ? { ok: true, value: r.value ? 1 : 0 } : r;
      return outcomeOf(ordered, i, stored, t0Ms, clock);
    });
  });
  return { plan, problems, rows };
}

export type ColumnsCheck = { ok: true; columns: DerivedColumn[] } | { ok: false; problems: Partial<Record<ColumnField, FieldProblem>>[] };

/** The columns to save, or the problems that stop the save. */
export function checkColumns(preview: ColumnsPreview, drafts: readonly ColumnDraft[]): ColumnsCheck {
  if (preview.problems.some((p) => Object.keys(p).length > 0)) return { ok: false, problems: preview.problems };
  const columns: DerivedColumn[] = [];
  for (const d of drafts) {
    const c: DerivedColumn = { key: d.key.trim(), label: d.label.trim(), expression: d.expression.trim() };
    if (d.unit.trim()) c.unit = d.unit.trim();
    const parsed = DerivedColumn.safeParse(c);
    if (!parsed.success) {
      return {
        ok: false,
        problems: drafts.map((x) =>
          x === d ? { expression: { message: parsed.error.issues[0]?.message ?? 'This column cannot be saved.' } } : {},
        ),
      };
    }
    columns.push(parsed.data);
  }
  return { ok: true, columns };
}

// --- Own goals ------------------------------------------------------------------------------

/** An own goal as typed in the form (every field text). */
export interface GoalDraft {
  id: string;
  label: string;
  condition: string;
  target: string;
  /** Minutes from time zero, as typed; "" for a standing target. */
  deadline: string;
}

export type GoalField = keyof GoalDraft;

export function goalDraftOf(g: CustomGoal): GoalDraft {
  return {
    id: g.id,
    label: g.label,
    condition: g.condition ?? '',
    target: g.target,
    deadline: g.deadlineMinutes === undefined ? '' : String(g.deadlineMinutes),
  };
}

const GOAL_ID = /^[a-z][a-z0-9-]{0,39}$/;
/** Longest deadline the model accepts: 7 days. */
export const MAX_DEADLINE_MINUTES = 7 * 24 * 60;

/**
 * An id made from a label: lower-case letters and digits joined by "-", starting with a letter,
 * at most 40 characters, and not one of `taken` ("MAP ≥ 65 by 6 h" → "map-65-by-6-h").
 */
export function goalIdFromLabel(label: string, taken: readonly string[] = []): string {
  const plain = label
    .normalize('NFKD')
    .replace(/[\u0300-\u036f]/g, '')
    .toLowerCase();
  let id = plain.replace(/[^a-z0-9]+/g, '-').replace(/^-+|-+$/g, '');
  if (!/^[a-z]/.test(id)) id = id ? `goal-${id}` : 'goal';
  id = id.slice(0, 40).replace(/-+$/, '');
  if (!taken.includes(id)) return id;
  for (let n = 2; ; n++) {
    const suffix = `-${n}`;
    const candidate = `${id.slice(0, 40 - suffix.length).replace(/-+$/, '')}${suffix}`;
    if (!taken.includes(candidate)) return candidate;
  }
}

/** The ids the drafts will be saved with: typed ids as they are, empty ones made from the label. */
export function resolvedGoalIds(drafts: readonly GoalDraft[]): string[] {
  const typed = drafts.map((d) => d.id.trim());
  const out: string[] = [];
  drafts.forEach((d, i) => {
    if (typed[i]) out.push(typed[i]);
    else out.push(goalIdFromLabel(d.label, [...typed.filter(Boolean), ...out]));
  });
  return out;
}

/** Whether a formula can be read, with the compiled formula. */
export type FormulaCheck = { ok: true; formula: CompiledFormula } | { ok: false; problem: FieldProblem };

/** Compiles a goal formula with the worksheet's own column keys allowed. */
export function checkFormula(text: string, columnKeys: readonly string[]): FormulaCheck {
  if (text.trim() === '') return { ok: false, problem: { message: 'Write the formula, for example map >= 65.' } };
  if (text.length > MAX_FORMULA_LENGTH)
    return {
      ok: false,
      problem: {
        message: `The formula is ${text.length} characters long; the limit is ${MAX_FORMULA_LENGTH}.`,
        position: MAX_FORMULA_LENGTH + 1,
      },
    };
  const r = compileFormula(text, { columns: columnKeys });
  if (r.ok) return { ok: true, formula: r.formula };
  return { ok: false, problem: r.position === undefined ? { message: r.error } : { message: r.error, position: r.position } };
}

/** Evaluates a compiled formula at every row of the worksheet (time order). */
export function evaluateFormulaOnRows(ws: Worksheet, derivation: Derivation, formula: CompiledFormula): RowOutcome[] {
  const ordered = timeOrdered(ws);
  const t0Ms = ws.timeZero ? Date.parse(ws.timeZero.time) : undefined;
  if (derivation.rows.length !== ordered.rows.length) return [];
  const clock = clockFormatter(ordered);
  return evaluateAtRows(ordered, derivation, formula).map((r, i) => outcomeOf(ordered, i, r, t0Ms, clock));
}

/** The derivation goals are evaluated on: built-ins, scores and the worksheet's saved columns. */
export function goalDerivation(ws: Worksheet): Derivation {
  return deriveAll(timeOrdered(ws));
}

/** Parses the deadline field: undefined for empty, a whole number of minutes, or a problem. */
export function parseDeadline(text: string): { ok: true; minutes: number | undefined } | { ok: false; problem: FieldProblem } {
  const t = text.trim();
  if (t === '') return { ok: true, minutes: undefined };
  if (!/^\d+$/.test(t))
    return {
      ok: false,
      problem: { message: `Write the deadline as whole minutes from time zero, for example 180 for 3 hours (not "${t}").` },
    };
  const n = Number(t);
  if (n > MAX_DEADLINE_MINUTES)
    return { ok: false, problem: { message: `The deadline is at most ${MAX_DEADLINE_MINUTES} minutes (7 days) from time zero.` } };
  return { ok: true, minutes: n };
}

/** Problems of every goal draft by field (empty objects when valid). */
export function goalProblems(drafts: readonly GoalDraft[], columnKeys: readonly string[]): Partial<Record<GoalField, FieldProblem>>[] {
  const ids = resolvedGoalIds(drafts);
  return drafts.map((d, i) => {
    const p: Partial<Record<GoalField, FieldProblem>> = {};
    const label = d.label.trim();
    if (label === '') p.label = { message: 'Give the goal a label, for example "MAP at least 65 by 6 h".' };
    else if (label.length > 120) p.label = { message: `The label is ${label.length} characters; the limit is 120.` };
    const typed = d.id.trim();
    if (typed && !GOAL_ID.test(typed)) {
      p.id = {
        message:
          'An id starts with a lower-case letter and has only lower-case letters, digits and - (at most 40); or leave it empty to make one from the label.',
      };
    } else if (ids.indexOf(ids[i]!) !== i) {
      p.id = { message: `Another of your goals already uses the id "${ids[i]!}".` };
    }
    if (d.condition.trim() !== '') {
      const c = checkFormula(d.condition, columnKeys);
      if (!c.ok) p.condition = c.problem;
    }
    const t = checkFormula(d.target, columnKeys);
    if (!t.ok) p.target = t.problem;
    const dl = parseDeadline(d.deadline);
    if (!dl.ok) p.deadline = dl.problem;
    return p;
  });
}

export type GoalsCheck = { ok: true; goals: CustomGoal[] } | { ok: false; problems: Partial<Record<GoalField, FieldProblem>>[] };

/** The goals to save, or the problems that stop the save. */
export function checkGoals(drafts: readonly GoalDraft[], columnKeys: readonly string[]): GoalsCheck {
  const problems = goalProblems(drafts, columnKeys);
  if (problems.some((p) => Object.keys(p).length > 0)) return { ok: false, problems };
  const ids = resolvedGoalIds(drafts);
  const goals: CustomGoal[] = [];
  for (const [i, d] of drafts.entries()) {
    const g: CustomGoal = { id: ids[i]!, label: d.label.trim(), target: d.target.trim() };
    if (d.condition.trim()) g.condition = d.condition.trim();
    const dl = parseDeadline(d.deadline);
    if (dl.ok && dl.minutes !== undefined) g.deadlineMinutes = dl.minutes;
    const parsed = CustomGoal.safeParse(g);
    if (!parsed.success)
      return {
        ok: false,
        problems: drafts.map((x) =>
          x === d ? { label: { message: parsed.error.issues[0]?.message ?? 'This goal cannot be saved.' } } : {},
        ),
      };
    goals.push(parsed.data);
  }
  return { ok: true, goals };
}

/** Consecutive rows with the same outcome, for a one-line summary. */
export interface OutcomeRun {
  text: string;
  from: string;
  to: string;
  count: number;
}

/** Groups consecutive rows with the same shown text: "true at 08:40–09:10 (2 rows)". */
export function outcomeRuns(outcomes: readonly RowOutcome[]): OutcomeRun[] {
  const runs: OutcomeRun[] = [];
  for (const o of outcomes) {
    const last = runs[runs.length - 1];
    if (last && last.text === o.text) {
      last.to = o.clock;
      last.count++;
    } else runs.push({ text: o.text, from: o.clock, to: o.clock, count: 1 });
  }
  return runs;
}

/**
 * One line over the rows: "false at 08:00; true at 08:40 to 09:10 (2 rows); needs lactate at 09:40".
 * At most `maxRuns` groups (the latest), with "…" in front when earlier ones are left out.
 */
export function outcomeSummary(outcomes: readonly RowOutcome[], maxRuns = 6): string {
  if (outcomes.length === 0) return 'No rows yet.';
  const runs = outcomeRuns(outcomes);
  const shown = runs
    .slice(-maxRuns)
    .map((r) => (r.count === 1 ? `${r.text} at ${r.from}` : `${r.text} at ${r.from} to ${r.to} (${r.count} rows)`));
  return `${runs.length > maxRuns ? '…; ' : ''}${shown.join('; ')}`;
}

// --- The names a formula may use (for the help list) ---------------------------------------

export interface HelpItem {
  name: string;
  meaning: string;
}

export interface HelpGroup {
  title: string;
  items: HelpItem[];
}

/** The names and words a formula may use, grouped for the help list. `columns` are the worksheet's own column keys with labels. */
export function formulaVocabulary(columns: readonly { key: string; label: string }[] = []): HelpGroup[] {
  const unitOf = (key: string): string => {
    const m = MEASURES.get(key)!;
    if (m.kind === 'mark') return '1 when marked';
    if (m.kind === 'text') return '1 when filled';
    return m.unit?.label ? m.unit.label : '';
  };
  const groups: HelpGroup[] = [
    {
      title: 'Measures charted in the row',
      items: MEASURE_KEYS.map((k) => ({ name: k, meaning: `${MEASURES.get(k)!.label}${unitOf(k) ? `, ${unitOf(k)}` : ''}` })),
    },
    {
      title: 'Measures Tidemark works out',
      items: DERIVED_DEFS.map((d) => ({ name: d.key, meaning: `${d.label}${d.unitLabel ? `, ${d.unitLabel}` : ''}` })),
    },
    { title: 'Scores', items: SCORE_DEFS.map((d) => ({ name: d.key, meaning: d.label })) },
  ];
  if (columns.length > 0)
    groups.push({ title: 'Your own columns (same row only)', items: columns.map((c) => ({ name: c.key, meaning: c.label })) });
  groups.push(
    { title: 'Worksheet facts', items: Object.entries(FACTS).map(([name, meaning]) => ({ name, meaning })) },
    { title: 'Row helpers', items: HELPERS.map((h) => ({ name: h.signature, meaning: h.description })) },
    {
      title: 'Functions',
      items: Object.keys(ALLOWED_FUNCTIONS).map((name) => ({ name: `${name}()`, meaning: FUNCTION_WORDS[name] ?? '' })),
    },
    {
      title: 'Operators and words',
      items: [
        { name: '+ - * / ^ %', meaning: 'arithmetic (^ is a power, % is the remainder)' },
        { name: '< <= > >= == !=', meaning: 'comparisons, giving true or false' },
        { name: 'and or not xor', meaning: 'combine true/false' },
        { name: 'a ? b : c', meaning: 'b when a is true, else c' },
        { name: 'key ?? 0', meaning: 'the value of key, or 0 when the row has none' },
      ],
    },
  );
  return groups;
}

const FUNCTION_WORDS: Readonly<Record<string, string>> = {
  abs: 'absolute value',
  min: 'smallest of the values',
  max: 'largest of the values',
  round: 'round(x) to a whole number, round(x, n) to n decimals',
  floor: 'round down',
  ceil: 'round up',
  sqrt: 'square root',
  log: 'natural logarithm; log(x, base)',
  exp: 'e to the power x',
  pow: 'pow(x, y) is x to the power y',
};
