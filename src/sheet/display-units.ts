/**
 * Display units: a per-user preference for the measures the trade shows in two units.
 * Values are always stored in the canonical unit (design.md); this module only changes how
 * they are shown and how a bare number typed by that user is read.
 *
 * | key | canonical | alternative | factor (catalog) |
 * |---|---|---|---|
 * | lactate | mmol/L | mg/dL | × 9.008 |
 * | creatinine | mg/dL | µmol/L | × 88.4 |
 * | bilirubin | mg/dL | µmol/L | × 17.1 |
 * | hb | g/dL | g/L | × 10 |
 * | temp | °C | °F | × 9/5 + 32 |
 *
 * The conversions are the catalog's UnitDefs (src/sheet/measures.ts); nothing is duplicated here.
 * Pure module.
 */
import { z } from 'zod';
import { measure, unitsOf, type UnitDef } from './measures.js';
import { parseCellInput, type ParseResult } from './parse.js';

/** The user's choice per measure (UCUM codes). Absent = the canonical unit. */
export const DisplayUnitPrefs = z
  .strictObject({
    lactate: z.enum(['mmol/L', 'mg/dL']),
    creatinine: z.enum(['mg/dL', 'umol/L']),
    bilirubin: z.enum(['mg/dL', 'umol/L']),
    hb: z.enum(['g/dL', 'g/L']),
    temp: z.enum(['Cel', '[degF]']),
  })
  .partial();
export type DisplayUnitPrefs = z.infer<typeof DisplayUnitPrefs>;
export type DualUnitKey = keyof DisplayUnitPrefs;

/** Measures with a display-unit choice, in the order a settings panel shows them. */
export const DUAL_UNIT_KEYS: readonly DualUnitKey[] = ['lactate', 'creatinine', 'bilirubin', 'hb', 'temp'];

/** Canonical units everywhere. */
export const DEFAULT_DISPLAY_UNITS: Required<DisplayUnitPrefs> = {
  lactate: 'mmol/L',
  creatinine: 'mg/dL',
  bilirubin: 'mg/dL',
  hb: 'g/dL',
  temp: 'Cel',
};

/** Decimals shown per unit (common practice, no source). */
const DECIMALS: Readonly<Record<string, number>> = {
  'lactate:mmol/L': 1,
  'lactate:mg/dL': 0,
  'creatinine:mg/dL': 2,
  'creatinine:umol/L': 0,
  'bilirubin:mg/dL': 1,
  'bilirubin:umol/L': 0,
  'hb:g/dL': 1,
  'hb:g/L': 0,
  'temp:Cel': 1,
  'temp:[degF]': 1,
};

function isDual(key: string): key is DualUnitKey {
  return (DUAL_UNIT_KEYS as readonly string[]).includes(key);
}

/** The two units offered for a measure (canonical first), or none. */
export function displayUnitChoices(key: string): readonly UnitDef[] {
  if (!isDual(key)) return [];
  const allowed = DisplayUnitPrefs.shape[key].unwrap().options as readonly string[];
  return unitsOf(measure(key)).filter((u) => allowed.includes(u.ucum));
}

/** The unit a measure is shown in for this user (the canonical unit unless chosen otherwise). */
export function displayUnit(key: string, prefs: DisplayUnitPrefs = {}): UnitDef | undefined {
  const def = measure(key);
  if (!isDual(key)) return def.unit;
  const want = prefs[key] ?? DEFAULT_DISPLAY_UNITS[key];
  return unitsOf(def).find((u) => u.ucum === want) ?? def.unit;
}

/** Decimals for a measure shown in a unit. */
export function displayDecimals(key: string, unit: UnitDef | undefined): number {
  const def = measure(key);
  return (unit && DECIMALS[`${key}:${unit.ucum}`]) ?? def.decimals ?? 1;
}

export interface DisplayValue {
  /** The number as text, rounded for display ("36"). */
  text: string;
  /** The number in the display unit, unrounded. */
  value: number;
  /** Unit label ("mg/dL"); empty for unitless measures. */
  unitLabel: string;
  /** UCUM code of the display unit. */
  ucum: string;
}

/** A canonical value shown in the user's unit for that measure. */
export function toDisplay(key: string, canonical: number, prefs: DisplayUnitPrefs = {}): DisplayValue {
  const unit = displayUnit(key, prefs);
  const value = unit ? unit.fromCanonical(canonical) : canonical;
  const decimals = displayDecimals(key, unit);
  const text = String(Number(value.toFixed(decimals)));
  return { text, value, unitLabel: unit?.label ?? '', ucum: unit?.ucum ?? '' };
}

/** "36 mg/dL" style text. */
export function formatDisplay(key: string, canonical: number, prefs: DisplayUnitPrefs = {}): string {
  const d = toDisplay(key, canonical, prefs);
  return d.unitLabel ? `${d.text} ${d.unitLabel}` : d.text;
}

/**
 * Reads what this user typed: a bare number is taken in their display unit ("36" is 36 mg/dL
 * for a user who shows lactate in mg/dL); a number with a unit is read as typed. Returns the
 * canonical cell or the refusal of parseCellInput.
 */
export function parseDisplayInput(key: string, text: string, prefs: DisplayUnitPrefs = {}): ParseResult {
  const def = measure(key);
  const unit = displayUnit(key, prefs);
  const raw = text.trim();
  if (def.kind === 'number' && unit && unit !== def.unit && /^[+-]?(?:\d+(?:[.,]\d*)?|[.,]\d+)$/.test(raw)) {
    const spelled = unit.label || unit.aliases[0] || unit.ucum;
    return parseCellInput(key, `${raw} ${spelled}`);
  }
  return parseCellInput(key, text);
}
