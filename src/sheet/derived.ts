/**
 * Derived measures, computed per row from the charted values (pure).
 *
 * - `deriveWorksheet(ws)`: the built-in derived measures (MAP estimate, shock index, urine rate,
 *   fluid totals, lactate change, NE equivalent, O₂ content and delivery...) for each row.
 * - `deriveAll(ws)`: built-in derived measures + scores (SOFA, qSOFA, SIRS, see scores.ts) + the
 *   worksheet's own derived columns (mathjs formulas through formula-engine.ts), per row.
 * - `updateDerived(prev, ws, change)`: the same result as `deriveAll(ws)` after one cell edit,
 *   recomputing only the rows the edit can reach (rules below).
 *
 * Each definition carries its formula and source so the app can show them.
 *
 * ## What a cell edit reaches (the dependency rules used by `affectedRows`)
 * An edit of `key` at row i (rows in time order, n rows):
 * - row-local built-ins (`map`, `shock_index`, `pulse_pressure`, `uo_ml_kg_h`, `ne_equivalent`,
 *   `cao2`, `do2`, `o2er`, `co2_gap`, `pf_ratio`) change at row i only;
 * - running built-ins change at rows i..n−1: `fluid_total_ml`/`fluid_ml_kg` (from `fluid_ml`,
 *   summed since time zero) and `lactate_change_pct` (from `lactate`, against the first lactate,
 *   so only when row i holds or comes before the first lactate; otherwise at row i only);
 * - scores read a 24 h window `(t − 24 h, t]`, so a score input at row i changes the scores of
 *   rows i..j where row j is the last row earlier than t_i + 24 h; a catecholamine (dopamine,
 *   dobutamine, epinephrine, norepinephrine) is carried forward until its next cell and must be
 *   held ≥ 1 h, so a drug edit at row i reaches the rows earlier than the drug's next charted
 *   time + 24 h + 1 h (to the end when it is not charted again);
 * - an edit that reaches no score input (fluids, lactate, O₂ content...) keeps the scores of the
 *   rows it recomputes;
 * - a user column that reads a changed key at its own row changes wherever that key changed;
 *   through `prev()`, `first()` or `running_sum()` it changes at rows i..n−1; through `at_t0()`
 *   at every row. User columns read other user columns only at the same row (helpers do not
 *   take user columns), so columns never reach across rows except through those helpers.
 * Row added, deleted or moved; weight, height, sex, ideal-weight choice, baseline SBP or time
 * zero changed; columns or options changed: everything is recomputed.
 */
import { devineIdealWeight, dosingWeight } from './body.js';
import { compileFormula, reservedNameReason, type CompiledFormula, type Ref, type Resolver, type EvalResult } from './formula-engine.js';
import { MEASURES } from './measures.js';
import type { DerivedColumn, Row, Worksheet } from './model.js';
import { makeScoreInput, scoresAt, WindowScanner, type RowScores, type ScoreOptions, DEFAULT_WINDOW_HOURS } from './scores.js';

export interface DerivedDef {
  key: string;
  label: string;
  short: string;
  /** UCUM unit. */
  unit: string;
  /** Unit label for people. */
  unitLabel: string;
  decimals: number;
  /** The formula, written for people. */
  formula: string;
  /** Where the formula comes from. */
  source: string;
}

/** Hüfner constant used for CaO₂, mL O₂ per g Hb (clinical convention; reference file §11). */
export const HUFNER = 1.34;
/** Dissolved O₂, mL O₂ per dL per mmHg (reference file §11). */
export const O2_SOLUBILITY = 0.003;

/**
 * Norepinephrine-equivalent factors (Goradia et al., J Crit Care 2021, as implemented in MIT-LCP
 * mimic-code; reference file §10). Vasopressin is in U/min, the others in µg/kg/min.
 * Angiotensin II (× 10 in the same formula) is not a Tidemark measure, so it is not included.
 */
export const NE_FACTORS: Readonly<Record<string, number>> = {
  norepinephrine: 1,
  epinephrine: 1,
  phenylephrine: 1 / 10,
  dopamine: 1 / 100,
  vasopressin: 2.5,
};

export const DERIVED_DEFS: readonly DerivedDef[] = [
  {
    key: 'map',
    label: 'Mean arterial pressure (estimated)',
    short: 'MAP',
    unit: 'mm[Hg]',
    unitLabel: 'mmHg',
    decimals: 0,
    formula: 'DBP + (SBP − DBP) / 3, when no measured MAP',
    source: 'common practice, no source (reference file §12)',
  },
  {
    key: 'shock_index',
    label: 'Shock index',
    short: 'SI',
    unit: '{ratio}',
    unitLabel: '',
    decimals: 2,
    formula: 'HR / SBP',
    source: 'common practice, no source',
  },
  {
    key: 'pulse_pressure',
    label: 'Pulse pressure',
    short: 'PP',
    unit: 'mm[Hg]',
    unitLabel: 'mmHg',
    decimals: 0,
    formula: 'SBP − DBP',
    source: 'common practice, no source',
  },
  {
    key: 'uo_ml_kg_h',
    label: 'Urine output rate',
    short: 'UO',
    unit: 'mL/kg/h',
    unitLabel: 'mL/kg/h',
    decimals: 2,
    formula: 'urine mL / (weight kg × hours since the previous row)',
    source: 'common practice, no source (reference file §13)',
  },
  {
    key: 'fluid_total_ml',
    label: 'Crystalloid since time zero',
    short: 'Fluid Σ',
    unit: 'mL',
    unitLabel: 'mL',
    decimals: 0,
    formula: 'sum of crystalloid in rows after time zero (or since the first row when time zero is not set)',
    source: 'common practice, no source',
  },
  {
    key: 'fluid_ml_kg',
    label: 'Crystalloid per kg since time zero',
    short: 'Fluid/kg',
    unit: 'mL/kg',
    unitLabel: 'mL/kg',
    decimals: 1,
    formula: 'crystalloid since time zero / dosing weight',
    source: 'SSC 2021 rec. 5 and the hour-1 bundle express the volume per kg',
  },
  {
    key: 'lactate_change_pct',
    label: 'Lactate change from first',
    short: 'Lact Δ%',
    unit: '%',
    unitLabel: '%',
    decimals: 1,
    formula: '100 × (lactate − first lactate) / first lactate (negative = falling), rounded to 12 significant digits',
    source: 'Nguyen 2004; Jones 2010 (reference file §8), sign reversed so a fall is negative',
  },
  {
    key: 'ne_equivalent',
    label: 'Norepinephrine equivalent',
    short: 'NEE',
    unit: 'ug/kg/min',
    unitLabel: 'µg/kg/min',
    decimals: 3,
    formula:
      'NE + epi + phenylephrine/10 + dopamine/100 + vasopressin(U/min) × 2.5 (angiotensin II, × 10 in the source, is not charted in Tidemark)',
    source: 'Goradia et al., J Crit Care 2021 (reference file §10)',
  },
  {
    key: 'cao2',
    label: 'Arterial O₂ content',
    short: 'CaO₂',
    unit: 'mL/dL',
    unitLabel: 'mL/dL',
    decimals: 1,
    formula: '1.34 × Hb × SaO₂ + 0.003 × PaO₂ (SpO₂ when no SaO₂; dissolved term omitted without PaO₂)',
    source: 'OpenAnesthesia; physiology texts (reference file §11)',
  },
  {
    key: 'do2',
    label: 'O₂ delivery',
    short: 'DO₂',
    unit: 'mL/min',
    unitLabel: 'mL/min',
    decimals: 0,
    formula: 'CO × CaO₂ × 10',
    source: 'reference file §11',
  },
  {
    key: 'o2er',
    label: 'O₂ extraction (estimate)',
    short: 'O₂ER',
    unit: '1',
    unitLabel: '',
    decimals: 2,
    formula: '(SaO₂ − ScvO₂) / SaO₂ (SpO₂ when no SaO₂; dissolved O₂ ignored)',
    source: 'reference file §11: O2ER ≈ SaO2 − SvO2 over SaO2',
  },
  {
    key: 'co2_gap',
    label: 'Venous-arterial CO₂ gap',
    short: 'CO₂ gap',
    unit: 'mm[Hg]',
    unitLabel: 'mmHg',
    decimals: 1,
    formula: 'PcvCO₂ − PaCO₂ (> 6 mmHg suggests low flow)',
    source: 'Vallée et al.; van Beest et al. (reference file §11)',
  },
  {
    key: 'pf_ratio',
    label: 'PaO₂/FiO₂',
    short: 'P/F',
    unit: 'mm[Hg]',
    unitLabel: 'mmHg',
    decimals: 0,
    formula: 'PaO₂ / FiO₂',
    source: 'Sepsis-3 Table 1 (SOFA respiration)',
  },
];

/** Scores, shown like derived measures (computed by deriveAll, not deriveWorksheet). */
export const SCORE_DEFS: readonly DerivedDef[] = [
  {
    key: 'sofa',
    label: 'SOFA score (24 h)',
    short: 'SOFA',
    unit: '{score}',
    unitLabel: 'points',
    decimals: 0,
    formula: 'sum of six organ parts from the worst values of the preceding 24 h; lists missing parts',
    source: 'Sepsis-3 Table 1 (Singer et al., JAMA 2016), adapted from Vincent et al. 1996',
  },
  {
    key: 'qsofa',
    label: 'qSOFA (24 h)',
    short: 'qSOFA',
    unit: '{score}',
    unitLabel: 'points',
    decimals: 0,
    formula: 'RR ≥ 22, SBP ≤ 100, GCS < 15: one point each; positive at ≥ 2',
    source: 'Sepsis-3 (Singer et al., JAMA 2016); GCS < 15 from Seymour et al. 2016',
  },
  {
    key: 'sirs',
    label: 'SIRS criteria (24 h)',
    short: 'SIRS',
    unit: '{score}',
    unitLabel: 'criteria',
    decimals: 0,
    formula: 'temperature > 38.0 or < 36.0 °C; HR > 90; RR > 20 or PaCO₂ < 32; WBC > 12 or < 4 ×10³/µL (SEP-1 variant: > 38.3 °C, RR only)',
    source: 'Bone et al., Chest 1992; SEP-1 specifications manual',
  },
];

export const DERIVED: ReadonlyMap<string, DerivedDef> = new Map(DERIVED_DEFS.map((d) => [d.key, d]));

/** Any derived definition by key: built-in, score. (User columns are in the worksheet.) */
export function derivedDef(key: string): DerivedDef | undefined {
  return DERIVED.get(key) ?? SCORE_DEFS.find((d) => d.key === key);
}

/** Derived values of one row. A key is absent when it cannot be computed. */
export type DerivedValues = Record<string, number>;

export interface DerivedRow {
  rowId: string;
  time: string;
  values: DerivedValues;
}

/**
 * Inputs of each built-in derived key, and whether it runs across rows (used by the recompute
 * rules above; checked against full recompute by tests/sheet/incremental.test.ts).
 */
export const BUILT_IN_INPUTS: Readonly<Record<string, { inputs: readonly string[]; running: boolean }>> = {
  map: { inputs: ['sbp', 'dbp', 'map'], running: false },
  shock_index: { inputs: ['hr', 'sbp'], running: false },
  pulse_pressure: { inputs: ['sbp', 'dbp'], running: false },
  uo_ml_kg_h: { inputs: ['uo_ml'], running: false },
  fluid_total_ml: { inputs: ['fluid_ml'], running: true },
  fluid_ml_kg: { inputs: ['fluid_ml'], running: true },
  lactate_change_pct: { inputs: ['lactate'], running: true },
  ne_equivalent: { inputs: Object.keys(NE_FACTORS), running: false },
  cao2: { inputs: ['hb', 'sao2', 'spo2', 'pao2'], running: false },
  do2: { inputs: ['hb', 'sao2', 'spo2', 'pao2', 'co'], running: false },
  o2er: { inputs: ['sao2', 'spo2', 'scvo2', 'svo2'], running: false },
  co2_gap: { inputs: ['pcvco2', 'paco2'], running: false },
  pf_ratio: { inputs: ['pao2', 'fio2'], running: false },
};

/** Keys the scores read (charted or built-in derived). */
export const SCORE_INPUTS: readonly string[] = [
  'pf_ratio',
  'platelets',
  'bilirubin',
  'map',
  'gcs',
  'creatinine',
  'uo_ml',
  'sbp',
  'rr',
  'hr',
  'temp',
  'wbc',
  'paco2',
];
/** Catecholamines the SOFA cardiovascular part reads (carried forward, so they reach later rows). */
export const SCORE_DRUG_INPUTS: readonly string[] = ['dopamine', 'dobutamine', 'epinephrine', 'norepinephrine'];

function num(row: Row, key: string): number | undefined {
  const c = row.cells[key];
  return c && typeof c.value === 'number' ? c.value : undefined;
}

/** Removes floating-point noise: 12 significant digits (reference file §15 #19). */
export function tidy(x: number): number {
  if (x === 0) return 0;
  return Number(x.toPrecision(12));
}

/** Estimated MAP from SBP and DBP. */
export function estimateMap(sbp: number, dbp: number): number {
  return dbp + (sbp - dbp) / 3;
}

/**
 * Arterial (or venous, with venous values) O₂ content, mL/dL. `sat` as a fraction 0–1; `po2`
 * optional, in the unit that matches `solubility` (0.003 per mmHg by default; 0.0225 per kPa in
 * worked example 1 of reference §11).
 */
export function arterialO2Content(hb: number, sat: number, po2?: number, hufner = HUFNER, solubility = O2_SOLUBILITY): number {
  return hufner * hb * sat + (po2 === undefined ? 0 : solubility * po2);
}

/** O₂ delivery, mL/min: CO (L/min) × content (mL/dL) × 10. */
export function oxygenDelivery(coLMin: number, contentMlDl: number): number {
  return coLMin * contentMlDl * 10;
}

/** O₂ consumption by the Fick principle, mL/min: CO × (CaO₂ − CvO₂) × 10. */
export function oxygenConsumption(coLMin: number, caO2: number, cvO2: number): number {
  return coLMin * (caO2 - cvO2) * 10;
}

/** O₂ extraction ratio: (CaO₂ − CvO₂) / CaO₂. */
export function extractionRatio(caO2: number, cvO2: number): number {
  return (caO2 - cvO2) / caO2;
}

/**
 * Lactate change in percent from an earlier value (negative = falling), tidied to 12 significant
 * digits so a 4.0 → 3.6 fall is exactly −10 (reference file §15 #19).
 * Lactate clearance in the Nguyen/Jones sense is the negative of this.
 */
export function lactateChangePct(first: number, later: number): number {
  return tidy((100 * (later - first)) / first);
}

/** NE equivalent from the drug cells of a row; undefined when no vasopressor is charted. */
export function neEquivalent(row: Row): number | undefined {
  let total = 0;
  let any = false;
  for (const [key, factor] of Object.entries(NE_FACTORS)) {
    const v = num(row, key);
    if (v !== undefined) {
      any = true;
      total += v * factor;
    }
  }
  return any ? tidy(total) : undefined;
}

// --- Built-in derived, one row at a time ------------------------------------------------------

interface Prepared {
  times: number[];
  t0: number | undefined;
  /** Crystalloid summed over rows 0..i that are at or after time zero. */
  fluidPrefix: number[];
  firstLactate: number | undefined;
  firstLactateIndex: number;
  dosingKg: number | undefined;
  actualKg: number | undefined;
}

function prepare(ws: Worksheet): Prepared {
  const times = ws.rows.map((r) => Date.parse(r.time));
  const t0 = ws.timeZero ? Date.parse(ws.timeZero.time) : undefined;
  const fluidPrefix: number[] = new Array<number>(ws.rows.length);
  let sum = 0;
  let firstLactate: number | undefined;
  let firstLactateIndex = -1;
  ws.rows.forEach((row, i) => {
    const f = num(row, 'fluid_ml');
    if (f !== undefined && (t0 === undefined || times[i]! >= t0)) sum += f;
    fluidPrefix[i] = sum;
    if (firstLactateIndex < 0) {
      const l = num(row, 'lactate');
      if (l !== undefined) {
        firstLactate = l;
        firstLactateIndex = i;
      }
    }
  });
  return { times, t0, fluidPrefix, firstLactate, firstLactateIndex, dosingKg: dosingWeight(ws)?.kg, actualKg: ws.weightKg };
}

function builtInAt(ws: Worksheet, p: Prepared, i: number): DerivedValues {
  const row = ws.rows[i]!;
  const v: DerivedValues = {};
  const t = p.times[i]!;
  const sbp = num(row, 'sbp');
  const dbp = num(row, 'dbp');
  const hr = num(row, 'hr');
  if (num(row, 'map') === undefined && sbp !== undefined && dbp !== undefined) v['map'] = tidy(estimateMap(sbp, dbp));
  if (hr !== undefined && sbp !== undefined && sbp > 0) v['shock_index'] = tidy(hr / sbp);
  if (sbp !== undefined && dbp !== undefined) v['pulse_pressure'] = tidy(sbp - dbp);

  const uo = num(row, 'uo_ml');
  const prevTime = i > 0 ? p.times[i - 1] : undefined;
  if (uo !== undefined && p.actualKg !== undefined && prevTime !== undefined && t > prevTime) {
    // Urine output per kg uses actual weight (common practice, no source); fluids use the dosing weight.
    v['uo_ml_kg_h'] = tidy(uo / (p.actualKg * ((t - prevTime) / 3_600_000)));
  }
  if (p.t0 === undefined || t >= p.t0) {
    const total = p.fluidPrefix[i]!;
    v['fluid_total_ml'] = tidy(total);
    if (p.dosingKg !== undefined) v['fluid_ml_kg'] = tidy(total / p.dosingKg);
  }

  const lac = num(row, 'lactate');
  if (lac !== undefined && p.firstLactate !== undefined && p.firstLactate > 0 && i >= p.firstLactateIndex) {
    v['lactate_change_pct'] = lactateChangePct(p.firstLactate, lac);
  }
  const nee = neEquivalent(row);
  if (nee !== undefined) v['ne_equivalent'] = nee;

  const hb = num(row, 'hb');
  const sat = num(row, 'sao2') ?? num(row, 'spo2');
  const pao2 = num(row, 'pao2');
  if (hb !== undefined && sat !== undefined) {
    const cao2 = arterialO2Content(hb, sat / 100, pao2);
    v['cao2'] = tidy(cao2);
    const co = num(row, 'co');
    if (co !== undefined) v['do2'] = tidy(oxygenDelivery(co, cao2));
  }
  const venous = num(row, 'scvo2') ?? num(row, 'svo2');
  if (sat !== undefined && venous !== undefined && sat > 0) v['o2er'] = tidy((sat - venous) / sat);
  const pcv = num(row, 'pcvco2');
  const paco2 = num(row, 'paco2');
  if (pcv !== undefined && paco2 !== undefined) v['co2_gap'] = tidy(pcv - paco2);
  const fio2 = num(row, 'fio2');
  if (pao2 !== undefined && fio2 !== undefined && fio2 > 0) v['pf_ratio'] = tidy(pao2 / fio2);
  return v;
}

/**
 * Computes every built-in derived measure for every row. Rows are taken in the worksheet's order
 * (kept sorted by time). O(rows × derived keys).
 */
export function deriveWorksheet(ws: Worksheet): DerivedRow[] {
  const p = prepare(ws);
  return ws.rows.map((row, i) => ({ rowId: row.id, time: row.time, values: builtInAt(ws, p, i) }));
}

/**
 * A value of a key at a row: the charted value if present, else the derived one.
 * Handy for goals and exports that accept either a measured or an estimated MAP.
 */
export function valueAt(row: Row, derived: DerivedRow | undefined, key: string): number | undefined {
  return num(row, key) ?? derived?.values[key];
}

// --- User derived columns ---------------------------------------------------------------------

export interface CompiledColumn {
  column: DerivedColumn;
  formula: CompiledFormula;
  /** Other user columns it reads at the same row. */
  dependsOn: string[];
}

export interface ColumnProblem {
  key: string;
  message: string;
  /** 1-based character of the formula where the problem starts, when known. */
  position?: number;
}

/** The worksheet's user columns, compiled and ordered so each comes after what it reads. */
export interface ColumnPlan {
  /** Valid columns in evaluation order. */
  order: CompiledColumn[];
  /** Columns that cannot be worked out, by key, with why. */
  errors: Record<string, ColumnProblem>;
}

/**
 * Compiles a worksheet's derived columns and orders them topologically. A column whose formula
 * is refused, whose key is taken, that is part of a dependency loop ("a → b → a"), or that reads
 * such a column, is reported in `errors` and not evaluated.
 */
export function compileColumns(columns: readonly DerivedColumn[]): ColumnPlan {
  const errors: Record<string, ColumnProblem> = {};
  const keys = columns.map((c) => c.key);
  const compiled = new Map<string, CompiledColumn>();
  const seen = new Set<string>();
  for (const column of columns) {
    if (seen.has(column.key)) {
      errors[column.key] ??= { key: column.key, message: `Two columns use the key "${column.key}"; give each its own key.` };
      compiled.delete(column.key);
      continue;
    }
    seen.add(column.key);
    const reserved = reservedNameReason(column.key);
    if (reserved) {
      errors[column.key] = { key: column.key, message: `${reserved}; choose another key for this column.` };
      continue;
    }
    const r = compileFormula(column.expression, { columns: keys });
    if (!r.ok) {
      errors[column.key] =
        r.position === undefined ? { key: column.key, message: r.error } : { key: column.key, message: r.error, position: r.position };
      continue;
    }
    const dependsOn = [...r.formula.rowKeys].filter((k) => keys.includes(k));
    compiled.set(column.key, { column, formula: r.formula, dependsOn });
  }

  // Depth-first topological order; a back edge is a loop.
  const order: CompiledColumn[] = [];
  const state = new Map<string, 'visiting' | 'done'>();
  const stack: string[] = [];
  const visit = (key: string): boolean => {
    if (errors[key]) return false;
    const c = compiled.get(key);
    if (!c) return false;
    const s = state.get(key);
    if (s === 'done') return true;
    if (s === 'visiting') {
      const loop = [...stack.slice(stack.indexOf(key)), key];
      const text = loop.join(' → ');
      for (const k of loop)
        errors[k] ??= { key: k, message: `Dependency loop: ${text}. A column cannot depend on itself, directly or through others.` };
      return false;
    }
    state.set(key, 'visiting');
    stack.push(key);
    let ok = true;
    for (const dep of c.dependsOn) {
      if (!visit(dep)) {
        ok = false;
        if (!errors[key]) {
          const why = errors[dep]?.message ?? 'it cannot be worked out';
          errors[key] = { key, message: `Reads "${dep}", which cannot be worked out: ${why}` };
        }
      }
    }
    stack.pop();
    state.set(key, 'done');
    if (ok && !errors[key]) order.push(c);
    return ok && !errors[key];
  };
  for (const column of columns) visit(column.key);
  return { order, errors };
}

// --- deriveAll --------------------------------------------------------------------------------

export type DeriveOptions = ScoreOptions;

export interface RowDerivation extends DerivedRow {
  /** SOFA, qSOFA and SIRS at this row, with their parts and missing inputs. */
  scores: RowScores;
  /** Why a user column has no value at this row ("needs lactate", or an error). */
  gaps: Record<string, string>;
}

export interface Derivation {
  rows: RowDerivation[];
  plan: ColumnPlan;
  /** Row ids and times the result was computed for. */
  rowIds: string[];
  rowTimes: string[];
  /** Everything besides cells that the result depends on; a change needs a full recompute. */
  basis: string;
}

/** Everything besides cells that a derivation depends on (see `Derivation.basis`). */
export function basisOf(ws: Worksheet, options: DeriveOptions = {}): string {
  return JSON.stringify([
    ws.weightKg ?? null,
    ws.heightCm ?? null,
    ws.sex ?? null,
    ws.useIdealWeight,
    ws.baselineSbp ?? null,
    ws.timeZero?.time ?? null,
    ws.derivedColumns,
    options.windowHours ?? DEFAULT_WINDOW_HOURS,
    options.sirsCriteria ?? 'bone1992',
    options.respiratorySupport ?? null,
    options.catecholamineMinHours ?? 1,
  ]);
}

/** Value of a key at a row for formulas: a number cell, 1 for a filled mark or text cell, else derived. */
function valueOfCell(row: Row, key: string): number | undefined {
  const c = row.cells[key];
  if (!c) return undefined;
  if (typeof c.value === 'number') return c.value;
  const def = MEASURES.get(key);
  if (def && (def.kind === 'mark' || def.kind === 'text')) return 1;
  return undefined;
}

function factValue(ws: Worksheet, fact: string): number | undefined {
  switch (fact) {
    case 'weight':
      return ws.weightKg;
    case 'dosing_weight':
      return dosingWeight(ws)?.kg;
    case 'height':
      return ws.heightCm;
    case 'ibw':
      return ws.heightCm !== undefined && ws.sex !== undefined ? devineIdealWeight(ws.heightCm, ws.sex).kg : undefined;
    case 'baseline_sbp':
      return ws.baselineSbp;
    default:
      return undefined;
  }
}

interface HelperKeys {
  prev: Set<string>;
  first: Set<string>;
  running_sum: Set<string>;
  at_t0: Set<string>;
}

function helperKeysOf(formulas: readonly CompiledFormula[]): HelperKeys {
  const h: HelperKeys = { prev: new Set(), first: new Set(), running_sum: new Set(), at_t0: new Set() };
  for (const f of formulas) {
    for (const [kind, keys] of f.helperKeys) for (const k of keys) h[kind].add(k);
  }
  return h;
}

/**
 * Walks rows in order and answers the row helpers (prev, first, running_sum, at_t0) for the
 * current row. `seed(lo)` prepares it to start at row lo from the final values of rows < lo.
 */
class HelperTracker {
  private readonly last = new Map<string, number>();
  private readonly firstSeen = new Map<string, number>();
  private readonly sum = new Map<string, number>();
  private readonly atT0 = new Map<string, number>();

  constructor(
    private readonly ws: Worksheet,
    private readonly times: readonly number[],
    private readonly t0: number | undefined,
    private readonly keys: HelperKeys,
    private readonly value: (j: number, key: string) => number | undefined,
  ) {}

  /** Call after every row's built-in values and scores are final. */
  seed(lo: number): void {
    for (const k of this.keys.prev) {
      for (let j = lo - 1; j >= 0; j--) {
        const v = this.value(j, k);
        if (v !== undefined) {
          this.last.set(k, v);
          break;
        }
      }
    }
    for (const k of this.keys.first) {
      for (let j = 0; j < lo; j++) {
        const v = this.value(j, k);
        if (v !== undefined) {
          this.firstSeen.set(k, v);
          break;
        }
      }
    }
    for (const k of this.keys.running_sum) {
      let s = 0;
      for (let j = 0; j < lo; j++) {
        if (this.t0 !== undefined && this.times[j]! < this.t0) continue;
        s += this.value(j, k) ?? 0;
      }
      this.sum.set(k, s);
    }
    if (this.t0 !== undefined) {
      for (const k of this.keys.at_t0) {
        for (let j = this.ws.rows.length - 1; j >= 0; j--) {
          if (this.times[j]! > this.t0) continue;
          const v = this.value(j, k);
          if (v !== undefined) {
            this.atT0.set(k, v);
            break;
          }
        }
      }
    }
  }

  /** The resolver for row i (before `advance(i)`). */
  resolver(i: number): Resolver {
    const t = this.times[i]!;
    return (ref: Ref): number | undefined => {
      switch (ref.kind) {
        case 'value':
          return this.value(i, ref.key);
        case 'fact':
          return factValue(this.ws, ref.fact);
        case 'prev':
          return this.last.get(ref.key);
        case 'first':
          return this.firstSeen.get(ref.key) ?? this.value(i, ref.key);
        case 'running_sum':
          if (this.t0 !== undefined && t < this.t0) return undefined;
          return tidy((this.sum.get(ref.key) ?? 0) + (this.value(i, ref.key) ?? 0));
        case 'at_t0':
          return this.atT0.get(ref.key);
        case 'hours_since_prev':
          return i > 0 ? (t - this.times[i - 1]!) / 3_600_000 : undefined;
        case 'hours_since_t0':
          return this.t0 === undefined ? undefined : (t - this.t0) / 3_600_000;
        default:
          return undefined;
      }
    };
  }

  advance(i: number): void {
    for (const k of this.keys.prev) {
      const v = this.value(i, k);
      if (v !== undefined) this.last.set(k, v);
    }
    for (const k of this.keys.first) {
      if (!this.firstSeen.has(k)) {
        const v = this.value(i, k);
        if (v !== undefined) this.firstSeen.set(k, v);
      }
    }
    if (this.t0 === undefined || this.times[i]! >= this.t0) {
      for (const k of this.keys.running_sum) this.sum.set(k, (this.sum.get(k) ?? 0) + (this.value(i, k) ?? 0));
    }
  }
}

function describeGap(r: EvalResult): string {
  if (r.ok) return '';
  if (r.missing) return `needs ${r.missing.join(', ')}`;
  return r.error ?? 'cannot be worked out';
}

/** Placeholder until pass 1b fills in the scores of a row. */
const EMPTY_SCORES = {} as RowScores;

/**
 * Recomputes rows lo..hi of `out` in place (rows outside keep their values). With `keepScores`
 * (the previous derivation, when the change cannot reach the scores), the scores of those rows are
 * taken from it instead of being recomputed.
 */
function computeRows(
  ws: Worksheet,
  plan: ColumnPlan,
  options: DeriveOptions,
  out: RowDerivation[],
  lo: number,
  hi: number,
  keepScores?: readonly RowDerivation[],
): void {
  const p = prepare(ws);
  const rows = ws.rows;
  const value = (j: number, key: string): number | undefined => valueOfCell(rows[j]!, key) ?? out[j]?.values[key];
  // Pass 1a: built-in derived measures.
  for (let i = lo; i <= hi; i++) {
    out[i] = { rowId: rows[i]!.id, time: rows[i]!.time, values: builtInAt(ws, p, i), scores: EMPTY_SCORES, gaps: {} };
  }
  // Pass 1b: scores, over the final built-in values (columns are built once, on first use).
  if (keepScores) {
    for (let i = lo; i <= hi; i++) {
      const r = out[i]!;
      const kept = keepScores[i]!;
      r.scores = kept.scores;
      for (const key of ['sofa', 'qsofa', 'sirs']) {
        const v = kept.values[key];
        if (v !== undefined) r.values[key] = v;
      }
    }
  } else {
    const scoreInput = makeScoreInput(p.times, (j, key) => num(rows[j]!, key) ?? out[j]?.values[key]);
    const scanner = new WindowScanner(scoreInput, options.windowHours ?? DEFAULT_WINDOW_HOURS);
    for (let i = lo; i <= hi; i++) {
      const r = out[i]!;
      r.scores = scoresAt(scoreInput, i, options, scanner);
      for (const [key, s] of [
        ['sofa', r.scores.sofa],
        ['qsofa', r.scores.qsofa],
        ['sirs', r.scores.sirs],
      ] as const) {
        if (Object.keys(s.parts).length > 0) r.values[key] = s.score;
      }
    }
  }
  if (plan.order.length === 0) return;

  // Pass 2: user columns, in dependency order, with the row helpers.
  const tracker = new HelperTracker(ws, p.times, p.t0, helperKeysOf(plan.order.map((c) => c.formula)), value);
  tracker.seed(lo);
  for (let i = lo; i <= hi; i++) {
    const resolve = tracker.resolver(i);
    const r = out[i]!;
    for (const c of plan.order) {
      const res = c.formula.evaluate(resolve);
      if (res.ok) r.values[c.column.key] = typeof res.value === 'boolean' ? (res.value ? 1 : 0) : tidy(res.value);
      else r.gaps[c.column.key] = describeGap(res);
    }
    tracker.advance(i);
  }
}

/**
 * Built-in derived measures + scores + the worksheet's own derived columns, for every row.
 * Options choose the score window, the SIRS criteria and respiratory support (see scores.ts).
 */
export function deriveAll(ws: Worksheet, options: DeriveOptions = {}): Derivation {
  const plan = compileColumns(ws.derivedColumns);
  const rows: RowDerivation[] = new Array<RowDerivation>(ws.rows.length);
  if (ws.rows.length > 0) computeRows(ws, plan, options, rows, 0, ws.rows.length - 1);
  return { rows, plan, rowIds: ws.rows.map((r) => r.id), rowTimes: ws.rows.map((r) => r.time), basis: basisOf(ws, options) };
}

/** One cell edit: the row's position (in the worksheet's time order) and the measure key. */
export interface CellChange {
  rowIndex: number;
  key: string;
}

/**
 * The rows an edit of `change.key` at `change.rowIndex` can reach, by the rules in this
 * module's header: an inclusive range `[from, to]` of row positions.
 */
export function affectedRows(
  ws: Worksheet,
  plan: ColumnPlan,
  change: CellChange,
  options: DeriveOptions = {},
): { from: number; to: number } {
  const { from, to } = reach(ws, plan, change, options);
  return { from, to };
}

/** Whether a row before `i` has a number in `key`. */
function numberBefore(ws: Worksheet, i: number, key: string): boolean {
  for (let j = i - 1; j >= 0; j--) if (num(ws.rows[j]!, key) !== undefined) return true;
  return false;
}

/**
 * `affectedRows`, and whether the scores in that range can change at all (when they cannot, an
 * update keeps them instead of recomputing them). Two reaches are narrower than "to the end":
 * - lactate: the change from the first lactate reaches later rows only when the edited row holds,
 *   or comes before, the first lactate; after it, a lactate edit changes its own row;
 * - a catecholamine: the SOFA cardiovascular part at row j reads the rates charted in
 *   `(t_j − window − hold, t_j]` and the last rate before that, which it carries forward
 *   (scores.ts `sustainedRate`), so a rate charted at row i is read by the rows before the drug's
 *   next charted rate plus window + hold, not by every later row.
 */
function reach(ws: Worksheet, plan: ColumnPlan, change: CellChange, options: DeriveOptions): { from: number; to: number; scores: boolean } {
  const n = ws.rows.length;
  const i = change.rowIndex;
  let from = i;
  let to = i;
  let scores = false;
  const changed = new Set<string>([change.key]);
  for (const [key, dep] of Object.entries(BUILT_IN_INPUTS)) {
    if (dep.inputs.includes(change.key)) {
      changed.add(key);
      const local = key === 'lactate_change_pct' && numberBefore(ws, i, 'lactate');
      if (dep.running && !local) to = n - 1;
    }
  }
  /** The last row earlier than `limit` (ms), from row i on. */
  const lastBefore = (limit: number): number => {
    let j = i;
    while (j + 1 < n && Date.parse(ws.rows[j + 1]!.time) < limit) j++;
    return j;
  };
  const windowMs = (options.windowHours ?? DEFAULT_WINDOW_HOURS) * 3_600_000;
  if (SCORE_DRUG_INPUTS.includes(change.key)) {
    let next = i + 1;
    while (next < n && num(ws.rows[next]!, change.key) === undefined) next++;
    const holdMs = (options.catecholamineMinHours ?? 1) * 3_600_000;
    to = Math.max(to, next >= n ? n - 1 : lastBefore(Date.parse(ws.rows[next]!.time) + windowMs + holdMs));
    scores = true;
  } else if (SCORE_INPUTS.some((k) => changed.has(k))) {
    to = Math.max(to, lastBefore(Date.parse(ws.rows[i]!.time) + windowMs));
    scores = true;
  }
  if (scores) for (const s of ['sofa', 'qsofa', 'sirs']) changed.add(s);
  for (const c of plan.order) {
    const f = c.formula;
    let hit = [...f.rowKeys].some((k) => changed.has(k));
    for (const [kind, keys] of f.helperKeys) {
      if (![...keys].some((k) => changed.has(k))) continue;
      hit = true;
      to = n - 1;
      if (kind === 'at_t0') from = 0;
    }
    if (hit) changed.add(c.column.key);
  }
  return { from, to, scores };
}

/**
 * The result of `deriveAll(ws, options)` after one cell edit, recomputing only the rows the edit
 * can reach. `prev` is the derivation before the edit; `ws` the worksheet after it. Falls back to
 * a full recompute when rows were added, removed or moved, or facts, columns or options changed.
 */
export function updateDerived(prev: Derivation, ws: Worksheet, change: CellChange, options: DeriveOptions = {}): Derivation {
  const n = ws.rows.length;
  const sameRows = prev.rowIds.length === n && ws.rows.every((r, k) => r.id === prev.rowIds[k] && r.time === prev.rowTimes[k]);
  if (!sameRows || prev.basis !== basisOf(ws, options) || change.rowIndex < 0 || change.rowIndex >= n) return deriveAll(ws, options);
  const { from, to, scores } = reach(ws, prev.plan, change, options);
  const rows = prev.rows.slice();
  computeRows(ws, prev.plan, options, rows, from, to, scores ? undefined : prev.rows);
  return { ...prev, rows };
}

/**
 * Evaluates a compiled formula (a custom goal's condition or target, say) at every row, with the
 * same values, facts and helpers user columns see. O(rows).
 */
export function evaluateAtRows(ws: Worksheet, derivation: Derivation, formula: CompiledFormula): EvalResult[] {
  const p = prepare(ws);
  const value = (j: number, key: string): number | undefined => valueOfCell(ws.rows[j]!, key) ?? derivation.rows[j]?.values[key];
  const tracker = new HelperTracker(ws, p.times, p.t0, helperKeysOf([formula]), value);
  tracker.seed(0);
  const out: EvalResult[] = [];
  for (let i = 0; i < ws.rows.length; i++) {
    out.push(formula.evaluate(tracker.resolver(i)));
    tracker.advance(i);
  }
  return out;
}

/**
 * The resolver for one row, for evaluating `formula` at a single moment (prefer evaluateAtRows
 * for many rows). O(rows) to set up.
 */
export function resolverAt(ws: Worksheet, derivation: Derivation, rowIndex: number, formula: CompiledFormula): Resolver {
  const p = prepare(ws);
  const value = (j: number, key: string): number | undefined => valueOfCell(ws.rows[j]!, key) ?? derivation.rows[j]?.values[key];
  const tracker = new HelperTracker(ws, p.times, p.t0, helperKeysOf([formula]), value);
  tracker.seed(rowIndex);
  return tracker.resolver(rowIndex);
}
