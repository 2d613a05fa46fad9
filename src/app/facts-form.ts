/**
 * Validation of the worksheet facts form (pure): turns the typed fields into a facts patch, or
 * gives a message per field. Shared by the facts panel and its tests.
 */
import { TimeZeroBasis, type TimeZero } from '../sheet/model.js';
import { parseTimeInput } from '../sheet/time.js';
import type { Facts } from '../sheet/worksheet.js';

export interface FactsFields {
  label: string;
  weightKg: string;
  heightCm: string;
  sex: string;
  baselineSbp: string;
  useIdealWeight: boolean;
  timeZero: string;
  basis: string;
  reason: string;
  shockTime: string;
}

export type FactsResult =
  | { ok: true; patch: Partial<Facts>; warnings: Partial<Record<keyof FactsFields, string>> }
  | { ok: false; errors: Partial<Record<keyof FactsFields, string>> };

/** Digits in a row that look like a record number rather than a bed or case code. */
const RECORD_NUMBER = /\d{6,}/;
/** Two capitalised words look like a person's name. */
const PERSON_NAME = /\b[A-Z][a-z]+[ ,]+[A-Z][a-z]+\b/;

function optionalNumber(text: string, label: string, min: number, max: number, unit: string): { value?: number; error?: string } {
  const t = text.trim().replace(',', '.');
  if (t === '') return {};
  const n = Number(t);
  if (!Number.isFinite(n)) return { error: `${label} takes a number in ${unit}.` };
  if (n < min || n > max) return { error: `${label} must be between ${min} and ${max} ${unit}.` };
  return { value: n };
}

/**
 * Validates the facts form.
 * @param offset the worksheet's display offset, for times typed without one
 * @param referenceMs the instant a bare clock time is read against (now)
 */
export function validateFacts(f: FactsFields, offset: number, referenceMs: number): FactsResult {
  const errors: Partial<Record<keyof FactsFields, string>> = {};
  const warnings: Partial<Record<keyof FactsFields, string>> = {};
  const patch: Partial<Facts> = {};

  const label = f.label.trim();
  if (label === '') errors.label = 'Give the worksheet a bed or case code.';
  else if (label.length > 60) errors.label = 'Keep the code to 60 characters.';
  else {
    patch.label = label;
    if (RECORD_NUMBER.test(label) || PERSON_NAME.test(label)) {
      warnings.label = 'This looks like a name or a record number. Use a bed or case code instead.';
    }
  }

  const w = optionalNumber(f.weightKg, 'Weight', 1, 400, 'kg');
  if (w.error) errors.weightKg = w.error;
  else patch.weightKg = w.value;
  const h = optionalNumber(f.heightCm, 'Height', 40, 250, 'cm');
  if (h.error) errors.heightCm = h.error;
  else patch.heightCm = h.value;
  const b = optionalNumber(f.baselineSbp, 'Baseline systolic pressure', 40, 300, 'mmHg');
  if (b.error) errors.baselineSbp = b.error;
  else patch.baselineSbp = b.value;

  if (f.sex === 'female' || f.sex === 'male') patch.sex = f.sex;
  else if (f.sex === '') patch.sex = undefined;
  else errors.sex = 'Choose female or male (used only for ideal body weight).';

  patch.useIdealWeight = f.useIdealWeight;
  if (f.useIdealWeight && (patch.heightCm === undefined || patch.sex === undefined) && !errors.heightCm) {
    warnings.useIdealWeight = 'Ideal body weight needs height and sex; actual weight is used until both are given.';
  }

  if (f.timeZero.trim() === '') {
    patch.timeZero = undefined;
  } else {
    const t = parseTimeInput(f.timeZero, offset, referenceMs);
    const basis = TimeZeroBasis.safeParse(f.basis);
    if (!t.ok) errors.timeZero = t.error;
    else if (!basis.success) errors.basis = 'Choose what time zero is based on.';
    else if (basis.data === 'other' && f.reason.trim() === '') errors.reason = 'Say why time zero was chosen.';
    else if (t.time > new Date(referenceMs + 5 * 60_000).toISOString()) errors.timeZero = 'Time zero cannot be in the future.';
    else {
      const tz: TimeZero = { time: t.time, offset: t.offset, basis: basis.data };
      if (f.reason.trim() !== '') tz.reason = f.reason.trim();
      patch.timeZero = tz;
    }
  }

  if (f.shockTime.trim() === '') patch.shockTime = undefined;
  else {
    const s = parseTimeInput(f.shockTime, offset, referenceMs);
    if (!s.ok) errors.shockTime = s.error;
    else patch.shockTime = s.time;
  }

  if (Object.keys(errors).length > 0) return { ok: false, errors };
  return { ok: true, patch, warnings };
}
