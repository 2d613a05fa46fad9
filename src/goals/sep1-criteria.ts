/**
 * SEP-1's own SIRS and organ-dysfunction criteria, used to suggest the severe sepsis
 * presentation time. They differ from Bone 1992 SIRS (temperature > 38.3 rather than > 38.0; no
 * PaCO2 alternative; reference file §15 #4, #5), so they live with SEP-1 and not with the scores.
 * Source: CMS/TJC SEP-1 Specifications Manual, as restated in reference file §3a
 * (IDSA 2021 Table 3; BMJ Qual Saf comparison table; Boston City EM SEP-1 summary). Pure.
 */
import { compare } from './context.js';

/** SEP-1 SIRS thresholds (reference file §3a). */
export const SEP1_SIRS = {
  /** °C: > 38.3 or < 36.0. */
  tempAbove: 38.3,
  tempBelow: 36.0,
  /** /min: > 90. */
  hrAbove: 90,
  /** /min: > 20 (no PaCO2 alternative in SEP-1). */
  rrAbove: 20,
  /** 10³/µL: > 12 or < 4 (bands are not charted). */
  wbcAbove: 12,
  wbcBelow: 4,
} as const;

/** SEP-1 organ dysfunction thresholds (reference file §3a). */
export const SEP1_ORGAN = {
  sbpBelow: 90,
  mapBelow: 65,
  /** SBP decrease from the last known baseline, mmHg: > 40 (a drop of exactly 40 does not count). */
  sbpDropAbove: 40,
  creatinineAbove: 2.0,
  /** mL/kg/h, for 2 consecutive hours. */
  urineBelow: 0.5,
  urineHours: 2,
  bilirubinAbove: 2,
  plateletsBelow: 100,
  inrAbove: 1.5,
  lactateAbove: 2,
} as const;

export type Sep1SirsCriterion = 'temp' | 'hr' | 'rr' | 'wbc';
export type Sep1OrganCriterion = 'sbp' | 'map' | 'sbp-drop' | 'creatinine' | 'urine' | 'bilirubin' | 'platelets' | 'inr' | 'lactate';

export interface Sep1Values {
  temp?: number | undefined;
  hr?: number | undefined;
  rr?: number | undefined;
  wbc?: number | undefined;
  sbp?: number | undefined;
  map?: number | undefined;
  creatinine?: number | undefined;
  bilirubin?: number | undefined;
  platelets?: number | undefined;
  inr?: number | undefined;
  lactate?: number | undefined;
}

/** The SEP-1 SIRS criteria met by one set of values, each with its reason. */
export function sep1SirsCriteria(v: Sep1Values): { criterion: Sep1SirsCriterion; reason: string }[] {
  const out: { criterion: Sep1SirsCriterion; reason: string }[] = [];
  const s = SEP1_SIRS;
  if (v.temp !== undefined && (compare(v.temp, '>', s.tempAbove) || compare(v.temp, '<', s.tempBelow))) {
    out.push({ criterion: 'temp', reason: `temperature ${v.temp} °C (> ${s.tempAbove} or < ${s.tempBelow.toFixed(1)})` });
  }
  if (v.hr !== undefined && compare(v.hr, '>', s.hrAbove)) out.push({ criterion: 'hr', reason: `heart rate ${v.hr} (> ${s.hrAbove})` });
  if (v.rr !== undefined && compare(v.rr, '>', s.rrAbove))
    out.push({ criterion: 'rr', reason: `respiratory rate ${v.rr} (> ${s.rrAbove})` });
  if (v.wbc !== undefined && (compare(v.wbc, '>', s.wbcAbove) || compare(v.wbc, '<', s.wbcBelow))) {
    out.push({ criterion: 'wbc', reason: `white cells ${v.wbc} ×10³/µL (> ${s.wbcAbove} or < ${s.wbcBelow})` });
  }
  return out;
}

/**
 * The SEP-1 organ-dysfunction criteria met by one set of values (all but urine output, which
 * needs 2 hours of rows: see sep1Oliguria). `baselineSbp` enables the SBP-drop criterion.
 */
export function sep1OrganCriteria(v: Sep1Values, baselineSbp?: number): { criterion: Sep1OrganCriterion; reason: string }[] {
  const out: { criterion: Sep1OrganCriterion; reason: string }[] = [];
  const o = SEP1_ORGAN;
  if (v.sbp !== undefined && compare(v.sbp, '<', o.sbpBelow)) out.push({ criterion: 'sbp', reason: `SBP ${v.sbp} (< ${o.sbpBelow})` });
  if (v.map !== undefined && compare(v.map, '<', o.mapBelow))
    out.push({ criterion: 'map', reason: `MAP ${Math.round(v.map)} (< ${o.mapBelow})` });
  if (v.sbp !== undefined && baselineSbp !== undefined && compare(baselineSbp - v.sbp, '>', o.sbpDropAbove)) {
    out.push({ criterion: 'sbp-drop', reason: `SBP ${v.sbp}, ${baselineSbp - v.sbp} under baseline ${baselineSbp} (> ${o.sbpDropAbove})` });
  }
  if (v.creatinine !== undefined && compare(v.creatinine, '>', o.creatinineAbove))
    out.push({ criterion: 'creatinine', reason: `creatinine ${v.creatinine} mg/dL (> ${o.creatinineAbove.toFixed(1)})` });
  if (v.bilirubin !== undefined && compare(v.bilirubin, '>', o.bilirubinAbove))
    out.push({ criterion: 'bilirubin', reason: `bilirubin ${v.bilirubin} mg/dL (> ${o.bilirubinAbove})` });
  if (v.platelets !== undefined && compare(v.platelets, '<', o.plateletsBelow))
    out.push({ criterion: 'platelets', reason: `platelets ${v.platelets} ×10³/µL (< ${o.plateletsBelow})` });
  if (v.inr !== undefined && compare(v.inr, '>', o.inrAbove)) out.push({ criterion: 'inr', reason: `INR ${v.inr} (> ${o.inrAbove})` });
  if (v.lactate !== undefined && compare(v.lactate, '>', o.lactateAbove))
    out.push({ criterion: 'lactate', reason: `lactate ${v.lactate} mmol/L (> ${o.lactateAbove})` });
  return out;
}

export interface UrineInterval {
  rowId: string;
  /** End of the interval (the row's time), ms. */
  endMs: number;
  /** Start of the interval (the previous row's time), ms. */
  startMs: number;
  /** mL/kg/h over the interval. */
  rate: number;
}

/**
 * Rows at which urine output has been below 0.5 mL/kg/h for 2 consecutive hours: a run of
 * charted urine intervals each below the threshold whose span (from the start of the first
 * interval to the end of the current one) is at least 2 h. A charted interval at or above the
 * threshold ends the run; rows without urine do not.
 */
export function sep1Oliguria(intervals: readonly UrineInterval[]): { rowId: string; ms: number; runStartMs: number; rowIds: string[] }[] {
  const out: { rowId: string; ms: number; runStartMs: number; rowIds: string[] }[] = [];
  let runStart: number | undefined;
  let runIds: string[] = [];
  for (const u of intervals) {
    if (compare(u.rate, '<', SEP1_ORGAN.urineBelow)) {
      if (runStart === undefined) {
        runStart = u.startMs;
        runIds = [];
      }
      runIds.push(u.rowId);
      if (u.endMs - runStart >= SEP1_ORGAN.urineHours * 3_600_000)
        out.push({ rowId: u.rowId, ms: u.endMs, runStartMs: runStart, rowIds: [...runIds] });
    } else {
      runStart = undefined;
      runIds = [];
    }
  }
  return out;
}
