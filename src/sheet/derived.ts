/**
 * Built-in derived measures, computed per row from the charted values (pure).
 *
 * `deriveWorksheet(ws)` gives, for each row in time order, the value of every derived key that
 * can be computed there. Each definition carries its formula and source so the app can show it.
 * Scores (SOFA, qSOFA, SIRS) live in src/sheet/scores.ts and are added to the same table.
 */
import { dosingWeight } from './body.js';
import type { Row, Worksheet } from './model.js';

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

export const HUFNER = 1.34;
export const O2_SOLUBILITY = 0.003;

/**
 * Norepinephrine-equivalent factors (Goradia et al., J Crit Care 2021, as implemented in MIT-LCP
 * mimic-code; reference file §10). Vasopressin is in U/min, the others in µg/kg/min.
 */
export const NE_FACTORS: Readonly<Record<string, number>> = {
  norepinephrine: 1,
  epinephrine: 1,
  phenylephrine: 1 / 10,
  dopamine: 1 / 100,
  vasopressin: 2.5,
};

export const DERIVED_DEFS: readonly DerivedDef[] = [
  { key: 'map', label: 'Mean arterial pressure (estimated)', short: 'MAP', unit: 'mm[Hg]', unitLabel: 'mmHg', decimals: 0, formula: 'DBP + (SBP − DBP) / 3, when no measured MAP', source: 'common practice, no source (reference file §12)' },
  { key: 'shock_index', label: 'Shock index', short: 'SI', unit: '{ratio}', unitLabel: '', decimals: 2, formula: 'HR / SBP', source: 'common practice, no source' },
  { key: 'pulse_pressure', label: 'Pulse pressure', short: 'PP', unit: 'mm[Hg]', unitLabel: 'mmHg', decimals: 0, formula: 'SBP − DBP', source: 'common practice, no source' },
  { key: 'uo_ml_kg_h', label: 'Urine output rate', short: 'UO', unit: 'mL/kg/h', unitLabel: 'mL/kg/h', decimals: 2, formula: 'urine mL / (weight kg × hours since the previous row)', source: 'common practice, no source (reference file §13)' },
  { key: 'fluid_total_ml', label: 'Crystalloid since time zero', short: 'Fluid Σ', unit: 'mL', unitLabel: 'mL', decimals: 0, formula: 'sum of crystalloid in rows after time zero (or since the first row when time zero is not set)', source: 'common practice, no source' },
  { key: 'fluid_ml_kg', label: 'Crystalloid per kg since time zero', short: 'Fluid/kg', unit: 'mL/kg', unitLabel: 'mL/kg', decimals: 1, formula: 'crystalloid since time zero / dosing weight', source: 'SSC 2021 rec. 5 and the hour-1 bundle express the volume per kg' },
  { key: 'lactate_change_pct', label: 'Lactate change from first', short: 'Lact Δ%', unit: '%', unitLabel: '%', decimals: 1, formula: '100 × (lactate − first lactate) / first lactate (negative = falling)', source: 'Nguyen 2004; Jones 2010 (reference file §8), sign reversed so a fall is negative' },
  { key: 'ne_equivalent', label: 'Norepinephrine equivalent', short: 'NEE', unit: 'ug/kg/min', unitLabel: 'µg/kg/min', decimals: 3, formula: 'NE + epi + phenylephrine/10 + dopamine/100 + vasopressin(U/min) × 2.5', source: 'Goradia et al., J Crit Care 2021 (reference file §10)' },
  { key: 'cao2', label: 'Arterial O₂ content', short: 'CaO₂', unit: 'mL/dL', unitLabel: 'mL/dL', decimals: 1, formula: '1.34 × Hb × SaO₂ + 0.003 × PaO₂ (SpO₂ when no SaO₂; dissolved term omitted without PaO₂)', source: 'OpenAnesthesia; physiology texts (reference file §11)' },
  { key: 'do2', label: 'O₂ delivery', short: 'DO₂', unit: 'mL/min', unitLabel: 'mL/min', decimals: 0, formula: 'CO × CaO₂ × 10', source: 'reference file §11' },
  { key: 'o2er', label: 'O₂ extraction (estimate)', short: 'O₂ER', unit: '1', unitLabel: '', decimals: 2, formula: '(SaO₂ − ScvO₂) / SaO₂ (SpO₂ when no SaO₂; dissolved O₂ ignored)', source: 'reference file §11: O2ER ≈ SaO2 − SvO2 over SaO2' },
  { key: 'co2_gap', label: 'Venous-arterial CO₂ gap', short: 'CO₂ gap', unit: 'mm[Hg]', unitLabel: 'mmHg', decimals: 1, formula: 'PcvCO₂ − PaCO₂ (> 6 mmHg suggests low flow)', source: 'Vallée et al.; van Beest et al. (reference file §11)' },
  { key: 'pf_ratio', label: 'PaO₂/FiO₂', short: 'P/F', unit: 'mm[Hg]', unitLabel: 'mmHg', decimals: 0, formula: 'PaO₂ / FiO₂', source: 'Sepsis-3 Table 1 (SOFA respiration)' },
];

export const DERIVED: ReadonlyMap<string, DerivedDef> = new Map(DERIVED_DEFS.map((d) => [d.key, d]));

/** Derived values of one row. A key is absent when it cannot be computed. */
export type DerivedValues = Record<string, number>;

export interface DerivedRow {
  rowId: string;
  time: string;
  values: DerivedValues;
}

function num(row: Row, key: string): number | undefined {
  const c = row.cells[key];
  return c && typeof c.value === 'number' ? c.value : undefined;
}

/** Estimated MAP from SBP and DBP. */
export function estimateMap(sbp: number, dbp: number): number {
  return dbp + (sbp - dbp) / 3;
}

/** Arterial O2 content, mL/dL. `sat` as a fraction 0–1; `pao2` mmHg optional. */
export function arterialO2Content(hb: number, sat: number, pao2?: number, hufner = HUFNER, solubility = O2_SOLUBILITY): number {
  return hufner * hb * sat + (pao2 === undefined ? 0 : solubility * pao2);
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
  return any ? total : undefined;
}

/**
 * Computes every built-in derived measure for every row. Rows are taken in time order.
 * O(rows × derived keys).
 */
export function deriveWorksheet(ws: Worksheet): DerivedRow[] {
  const rows = ws.rows;
  const weight = dosingWeight(ws);
  const actualKg = ws.weightKg;
  const t0 = ws.timeZero ? Date.parse(ws.timeZero.time) : undefined;
  let fluidTotal = 0;
  let firstLactate: number | undefined;
  const out: DerivedRow[] = [];
  let prevTime: number | undefined;
  for (const row of rows) {
    const v: DerivedValues = {};
    const t = Date.parse(row.time);
    const sbp = num(row, 'sbp');
    const dbp = num(row, 'dbp');
    const hr = num(row, 'hr');
    if (num(row, 'map') === undefined && sbp !== undefined && dbp !== undefined) v['map'] = estimateMap(sbp, dbp);
    if (hr !== undefined && sbp !== undefined && sbp > 0) v['shock_index'] = hr / sbp;
    if (sbp !== undefined && dbp !== undefined) v['pulse_pressure'] = sbp - dbp;

    const uo = num(row, 'uo_ml');
    if (uo !== undefined && actualKg !== undefined && prevTime !== undefined && t > prevTime) {
      // Urine output per kg uses actual weight (common practice, no source); fluids use the dosing weight.
      v['uo_ml_kg_h'] = uo / (actualKg * ((t - prevTime) / 3_600_000));
    }
    const fluid = num(row, 'fluid_ml');
    if (fluid !== undefined && (t0 === undefined || t >= t0)) fluidTotal += fluid;
    if (t0 === undefined || t >= t0) {
      v['fluid_total_ml'] = fluidTotal;
      if (weight) v['fluid_ml_kg'] = fluidTotal / weight.kg;
    }

    const lac = num(row, 'lactate');
    if (lac !== undefined) {
      if (firstLactate === undefined) firstLactate = lac;
      if (firstLactate > 0) v['lactate_change_pct'] = (100 * (lac - firstLactate)) / firstLactate;
    }
    const nee = neEquivalent(row);
    if (nee !== undefined) v['ne_equivalent'] = nee;

    const hb = num(row, 'hb');
    const sat = num(row, 'sao2') ?? num(row, 'spo2');
    const pao2 = num(row, 'pao2');
    if (hb !== undefined && sat !== undefined) {
      const cao2 = arterialO2Content(hb, sat / 100, pao2);
      v['cao2'] = cao2;
      const co = num(row, 'co');
      if (co !== undefined) v['do2'] = co * cao2 * 10;
    }
    const venous = num(row, 'scvo2') ?? num(row, 'svo2');
    if (sat !== undefined && venous !== undefined && sat > 0) v['o2er'] = (sat - venous) / sat;
    const pcv = num(row, 'pcvco2');
    const paco2 = num(row, 'paco2');
    if (pcv !== undefined && paco2 !== undefined) v['co2_gap'] = pcv - paco2;
    const fio2 = num(row, 'fio2');
    if (pao2 !== undefined && fio2 !== undefined && fio2 > 0) v['pf_ratio'] = pao2 / fio2;

    out.push({ rowId: row.id, time: row.time, values: v });
    prevTime = t;
  }
  return out;
}

/**
 * A value of a key at a row: the charted value if present, else the derived one.
 * Handy for goals and exports that accept either a measured or an estimated MAP.
 */
export function valueAt(row: Row, derived: DerivedRow | undefined, key: string): number | undefined {
  return num(row, key) ?? derived?.values[key];
}
