// Display units: per-user choice between the two units the trade uses, through the catalog's UnitDefs.
import { describe, expect, it } from 'vitest';
import {
  DEFAULT_DISPLAY_UNITS,
  DisplayUnitPrefs,
  DUAL_UNIT_KEYS,
  displayUnit,
  displayUnitChoices,
  formatDisplay,
  parseDisplayInput,
  toDisplay,
} from '../../src/sheet/display-units.js';

describe('display units', () => {
  it('offers exactly two units for lactate, creatinine, bilirubin, hemoglobin and temperature', () => {
    expect(DUAL_UNIT_KEYS).toEqual(['lactate', 'creatinine', 'bilirubin', 'hb', 'temp']);
    expect(displayUnitChoices('lactate').map((u) => u.label)).toEqual(['mmol/L', 'mg/dL']);
    expect(displayUnitChoices('creatinine').map((u) => u.label)).toEqual(['mg/dL', 'µmol/L']);
    expect(displayUnitChoices('bilirubin').map((u) => u.label)).toEqual(['mg/dL', 'µmol/L']);
    expect(displayUnitChoices('hb').map((u) => u.label)).toEqual(['g/dL', 'g/L']);
    expect(displayUnitChoices('temp').map((u) => u.label)).toEqual(['°C', '°F']);
    expect(displayUnitChoices('map')).toEqual([]);
  });

  it('defaults to the canonical unit', () => {
    for (const key of DUAL_UNIT_KEYS) expect(displayUnit(key)?.ucum).toBe(DEFAULT_DISPLAY_UNITS[key]);
    expect(formatDisplay('lactate', 4)).toBe('4 mmol/L');
  });

  it('shows lactate 2 / 4 mmol/L as 18 / 36 mg/dL (× 9.008, reference §8, §16)', () => {
    const prefs: DisplayUnitPrefs = { lactate: 'mg/dL' };
    expect(toDisplay('lactate', 2, prefs).value).toBeCloseTo(18.016, 3);
    expect(formatDisplay('lactate', 2, prefs)).toBe('18 mg/dL');
    expect(formatDisplay('lactate', 4, prefs)).toBe('36 mg/dL');
  });

  it('shows creatinine and bilirubin in µmol/L (88.4 and 17.1, reference §12, §16)', () => {
    expect(formatDisplay('creatinine', 2.0, { creatinine: 'umol/L' })).toBe('177 µmol/L'); // 176.8
    expect(formatDisplay('bilirubin', 12.0, { bilirubin: 'umol/L' })).toBe('205 µmol/L'); // 205.2
  });

  it('shows hemoglobin in g/L (× 10) and temperature in °F (× 9/5 + 32), reference §12', () => {
    expect(formatDisplay('hb', 12.3, { hb: 'g/L' })).toBe('123 g/L');
    expect(formatDisplay('temp', 38.0, { temp: '[degF]' })).toBe('100.4 °F');
    expect(formatDisplay('temp', 36.0, { temp: '[degF]' })).toBe('96.8 °F');
    expect(toDisplay('temp', 38.3, { temp: '[degF]' }).value).toBeCloseTo(100.94, 9);
  });

  it('reads a bare number in the user unit, and a number with a unit as typed', () => {
    const mg = parseDisplayInput('lactate', '36', { lactate: 'mg/dL' });
    expect(mg.ok && mg.cell?.value).toBeCloseTo(36 / 9.008, 9);
    expect(mg.ok && mg.cell?.input).toBe('36 mg/dL');
    const typed = parseDisplayInput('lactate', '4 mmol/L', { lactate: 'mg/dL' });
    expect(typed.ok && typed.cell?.value).toBe(4);
    const f = parseDisplayInput('temp', '100.4', { temp: '[degF]' });
    expect(f.ok && f.cell?.value).toBe(38);
    const plain = parseDisplayInput('lactate', '4', {});
    expect(plain.ok && plain.cell?.value).toBe(4);
  });

  it('keeps the catalog refusals (range in the canonical unit)', () => {
    const r = parseDisplayInput('lactate', '400', { lactate: 'mg/dL' });
    expect(r.ok).toBe(false);
    expect(!r.ok && r.error).toContain('0–30 mmol/L');
  });

  it('validates stored preferences with zod', () => {
    expect(DisplayUnitPrefs.safeParse({ lactate: 'mg/dL', temp: '[degF]' }).success).toBe(true);
    expect(DisplayUnitPrefs.safeParse({ lactate: 'g/L' }).success).toBe(false);
    expect(DisplayUnitPrefs.safeParse({ map: 'kPa' }).success).toBe(false);
  });
});
