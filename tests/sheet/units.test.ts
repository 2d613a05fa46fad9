// Every unit conversion in the measure catalog against its published value.
import { describe, expect, it } from 'vitest';
import {
  BILIRUBIN_UMOL_PER_MG_DL,
  CREATININE_UMOL_PER_MG_DL,
  HB_MMOL_PER_G_DL,
  LACTATE_MG_DL_PER_MMOL_L,
  MEASURES,
  MMHG_PER_CMH2O,
  MMHG_PER_KPA,
  unitsOf,
  type UnitDef,
} from '../../src/sheet/measures.js';

function unitOf(key: string, ucum: string): UnitDef {
  const u = unitsOf(MEASURES.get(key)!).find((x) => x.ucum === ucum && x !== MEASURES.get(key)!.unit);
  if (!u) throw new Error(`no alternate unit ${ucum} for ${key}`);
  return u;
}

/**
 * Expected canonical value of 1 unit of each alternate unit, with its source. A new alternate
 * unit added to the catalog without an entry here fails the coverage test below.
 */
const EXPECTED: Record<string, { oneIs: number; source: string }> = {
  // Reference file §8: 1 mmol/L = 9.008 mg/dL (lactic acid 90.08 g/mol).
  'lactate mg/dL': { oneIs: 1 / 9.008, source: 'reference §8, molar mass of lactic acid 90.08 g/mol' },
  // Reference file §12: 1 mg/dL creatinine = 88.4 µmol/L (MW 113.12).
  'creatinine umol/L': { oneIs: 1 / 88.4, source: 'reference §12, creatinine MW 113.12' },
  // Reference file §12: 1 mg/dL bilirubin = 17.1 µmol/L (MW 584.66).
  'bilirubin umol/L': { oneIs: 1 / 17.1, source: 'reference §12, bilirubin MW 584.66' },
  // Reference file §12: g/dL × 10 = g/L.
  'hb g/L': { oneIs: 0.1, source: 'reference §12, common practice, no source' },
  // Reference file §12: g/dL × 0.6206 = mmol/L (monomer).
  'hb mmol/L': { oneIs: 1 / 0.6206, source: 'reference §12, common practice, no source' },
  // Reference file §12: 1 kPa = 7.50062 mmHg.
  'pao2 kPa': { oneIs: 7.50062, source: 'reference §12, common practice, no source' },
  'paco2 kPa': { oneIs: 7.50062, source: 'reference §12, common practice, no source' },
  'pcvco2 kPa': { oneIs: 7.50062, source: 'reference §12, common practice, no source' },
  // 1 cmH2O (conventional) = 98.0665 Pa; 1 mmHg (conventional) = 133.322 Pa → 0.735559 mmHg.
  // NIST SP 811 Appendix B conversion factors (from memory).
  'cvp cm[H2O]': { oneIs: 98.0665 / 133.322387, source: 'NIST SP 811 Appendix B (from memory)' },
  // Reference file §12: 10³/µL = 10⁹/L.
  'wbc 10*9/L': { oneIs: 1, source: 'reference §12' },
  'platelets 10*9/L': { oneIs: 1, source: 'reference §12' },
  // Saturation typed as a fraction: 0.98 = 98 % (definition of per cent).
  'spo2 1': { oneIs: 100, source: 'definition of per cent' },
  'sao2 1': { oneIs: 100, source: 'definition of per cent' },
  'scvo2 1': { oneIs: 100, source: 'definition of per cent' },
  'svo2 1': { oneIs: 100, source: 'definition of per cent' },
  // FiO2 typed in per cent: 40 % = 0.40.
  'fio2 %': { oneIs: 0.01, source: 'definition of per cent' },
  // 1 L = 1000 mL (SI).
  'fluid_ml L': { oneIs: 1000, source: 'SI' },
  'blood_ml L': { oneIs: 1000, source: 'SI' },
  'uo_ml L': { oneIs: 1000, source: 'SI' },
};

describe('unit conversion factors', () => {
  it('every alternate unit in the catalog has a published expectation', () => {
    const listed: string[] = [];
    for (const def of MEASURES.values()) {
      for (const u of def.alternates ?? []) {
        if (def.key === 'temp') continue; // °F is a formula, checked below
        listed.push(`${def.key} ${u.ucum}`);
      }
    }
    expect(listed.sort()).toEqual(Object.keys(EXPECTED).sort());
  });

  for (const [name, { oneIs, source }] of Object.entries(EXPECTED)) {
    it(`${name}: 1 unit = ${oneIs.toPrecision(6)} canonical (${source})`, () => {
      const [key, ucum] = name.split(' ') as [string, string];
      const u = unitOf(key, ucum);
      expect(u.toCanonical(1)).toBeCloseTo(oneIs, 5);
      // Round trip through the canonical unit.
      expect(u.fromCanonical(u.toCanonical(37.5))).toBeCloseTo(37.5, 9);
    });
  }

  it('exported factors match the published figures', () => {
    expect(LACTATE_MG_DL_PER_MMOL_L).toBe(9.008); // reference §8
    expect(CREATININE_UMOL_PER_MG_DL).toBe(88.4); // reference §12
    expect(BILIRUBIN_UMOL_PER_MG_DL).toBe(17.1); // reference §12
    expect(HB_MMOL_PER_G_DL).toBe(0.6206); // reference §12
    expect(MMHG_PER_KPA).toBe(7.50062); // reference §12
    // 1 mmHg = 0.133322 kPa (reference §12): the inverse of 7.50062.
    expect(1 / MMHG_PER_KPA).toBeCloseTo(0.133322, 6);
    // cmH2O: 98.0665 Pa / 133.322387 Pa (NIST SP 811, from memory).
    expect(MMHG_PER_CMH2O).toBeCloseTo(0.735559, 5);
  });

  it('lactate 2 / 4 mmol/L = 18.02 / 36.03 mg/dL (reference §16)', () => {
    const u = unitOf('lactate', 'mg/dL');
    expect(u.fromCanonical(2)).toBeCloseTo(18.02, 2);
    expect(u.fromCanonical(4)).toBeCloseTo(36.03, 2);
  });

  it('creatinine 1.2 / 2.0 / 3.5 / 5.0 mg/dL = 106.1 / 176.8 / 309.4 / 442.0 µmol/L (reference §16)', () => {
    const u = unitOf('creatinine', 'umol/L');
    expect(u.fromCanonical(1.2)).toBeCloseTo(106.1, 1);
    expect(u.fromCanonical(2.0)).toBeCloseTo(176.8, 1);
    expect(u.fromCanonical(3.5)).toBeCloseTo(309.4, 1);
    expect(u.fromCanonical(5.0)).toBeCloseTo(442.0, 1);
  });

  it('bilirubin 1.2 / 2.0 / 6.0 / 12.0 mg/dL = 20.5 / 34.2 / 102.6 / 205.2 µmol/L (reference §16)', () => {
    const u = unitOf('bilirubin', 'umol/L');
    expect(u.fromCanonical(1.2)).toBeCloseTo(20.52, 2);
    expect(u.fromCanonical(2.0)).toBeCloseTo(34.2, 1);
    expect(u.fromCanonical(6.0)).toBeCloseTo(102.6, 1);
    expect(u.fromCanonical(12.0)).toBeCloseTo(205.2, 1);
  });

  it('P/F 400 / 300 / 200 / 100 mmHg = 53.3 / 40.0 / 26.7 / 13.3 kPa; PaCO2 32 mmHg = 4.27 kPa (reference §16)', () => {
    const u = unitOf('pao2', 'kPa');
    expect(u.fromCanonical(400)).toBeCloseTo(53.3, 1);
    expect(u.fromCanonical(300)).toBeCloseTo(40.0, 1);
    expect(u.fromCanonical(200)).toBeCloseTo(26.7, 1);
    expect(u.fromCanonical(100)).toBeCloseTo(13.3, 1);
    expect(unitOf('paco2', 'kPa').fromCanonical(32)).toBeCloseTo(4.27, 2);
  });

  it('hemoglobin 15 g/dL = 150 g/L = 9.309 mmol/L (reference §12 factors)', () => {
    expect(unitOf('hb', 'g/L').fromCanonical(15)).toBeCloseTo(150, 9);
    expect(unitOf('hb', 'mmol/L').fromCanonical(15)).toBeCloseTo(9.309, 3);
  });

  it('temperature: °F = °C × 9/5 + 32; 36.0 / 38.0 / 38.3 °C = 96.8 / 100.4 / 100.94 °F (reference §12, §16)', () => {
    const f = unitOf('temp', '[degF]');
    expect(f.fromCanonical(36.0)).toBeCloseTo(96.8, 9);
    expect(f.fromCanonical(38.0)).toBeCloseTo(100.4, 9);
    expect(f.fromCanonical(38.3)).toBeCloseTo(100.94, 9);
    expect(f.toCanonical(96.8)).toBeCloseTo(36.0, 9);
    expect(f.toCanonical(100.4)).toBeCloseTo(38.0, 9);
    expect(f.toCanonical(100.94)).toBeCloseTo(38.3, 9);
    // Fixed points of the two scales: water freezes at 0 °C = 32 °F, boils at 100 °C = 212 °F.
    expect(f.fromCanonical(0)).toBe(32);
    expect(f.fromCanonical(100)).toBe(212);
  });

  it('CVP 10 cmH2O = 7.36 mmHg (NIST SP 811 factors, from memory)', () => {
    expect(unitOf('cvp', 'cm[H2O]').toCanonical(10)).toBeCloseTo(7.3556, 3);
  });
});
