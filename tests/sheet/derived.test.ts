// Built-in derived measures against published formulas and worked examples.
import { describe, expect, it } from 'vitest';
import {
  arterialO2Content,
  deriveWorksheet,
  estimateMap,
  extractionRatio,
  lactateChangePct,
  neEquivalent,
  oxygenConsumption,
  oxygenDelivery,
  valueAt,
} from '../../src/sheet/derived.js';
import { MMHG_PER_KPA } from '../../src/sheet/measures.js';
import { row, worksheet } from './sheet-fixture.js';

describe('MAP estimate: DBP + (SBP − DBP)/3 (reference §12, §16)', () => {
  it('90/60 → 70.0; 120/80 → 93.3', () => {
    expect(estimateMap(90, 60)).toBeCloseTo(70.0, 9);
    expect(estimateMap(120, 80)).toBeCloseTo(93.3, 1);
  });

  it('is derived only when no MAP is charted', () => {
    const ws = worksheet({
      rows: [
        { min: 0, cells: { sbp: 90, dbp: 60 } },
        { min: 10, cells: { sbp: 90, dbp: 60, map: 75 } },
      ],
    });
    const d = deriveWorksheet(ws);
    expect(d[0]!.values['map']).toBe(70);
    expect(d[1]!.values['map']).toBeUndefined();
    expect(valueAt(ws.rows[1]!, d[1], 'map')).toBe(75);
    expect(d[0]!.values['pulse_pressure']).toBe(30);
  });
});

describe('norepinephrine equivalent (Goradia 2021, reference §10, §16)', () => {
  it('NE 0.1 + epi 0.05 + phenylephrine 1.0 + dopamine 5 + vasopressin 0.03 U/min = 0.375 (the published 0.575 less angiotensin II 0.02 × 10, which Tidemark does not chart)', () => {
    const r = row('x', 0, { norepinephrine: 0.1, epinephrine: 0.05, phenylephrine: 1.0, dopamine: 5, vasopressin: 0.03 });
    const nee = neEquivalent(r)!;
    expect(nee).toBe(0.375);
    // The reference vector: 0.575 including angiotensin II 0.02 µg/kg/min × 10 = 0.2.
    expect(nee + 0.02 * 10).toBeCloseTo(0.575, 12);
  });

  it('vasopressin 0.04 U/min ≈ 0.1 µg/kg/min NE (reference §10)', () => {
    expect(neEquivalent(row('x', 0, { vasopressin: 0.04 }))).toBeCloseTo(0.1, 12);
  });

  it('is absent without any vasopressor', () => {
    expect(neEquivalent(row('x', 0, { map: 60 }))).toBeUndefined();
  });
});

describe('oxygen transport (reference §11 worked examples, each with its own constants)', () => {
  it('example 1 (Postgrad Med J table): Hb 14.0, SaO2 0.98, Hüfner 1.39, PaO2 13.3 kPa × 0.0225 → CaO2 19.4 mL/dL; DO2 = 4.9 L/min × 194 mL/L = 950.6 mL/min', () => {
    const cao2 = arterialO2Content(14.0, 0.98, 13.3, 1.39, 0.0225);
    expect(cao2).toBeCloseTo(19.4, 1);
    // The published figure multiplies the rounded content (194 mL/L).
    expect(oxygenDelivery(70 * 0.07, Number(cao2.toFixed(1)))).toBeCloseTo(950.6, 1);
    // Unrounded, the delivery stays within 0.2 % of the published value.
    expect(Math.abs(oxygenDelivery(4.9, cao2) - 950.6) / 950.6).toBeLessThan(0.002);
  });

  it('example 2 (e-Safe Anaesthesia, SI): Hb 150 g/L, 1.34, SaO2 0.98, 0.23 mL/L/kPa × 13 kPa → 200 mL/L; × 5 L/min = 1000 mL/min', () => {
    const cao2 = arterialO2Content(15.0, 0.98, 13, 1.34, 0.023); // mL/dL; 0.23 mL/L/kPa = 0.023 mL/dL/kPa
    expect(cao2 * 10).toBeCloseTo(200, 0);
    expect(oxygenDelivery(5, cao2)).toBeCloseTo(1000, -1);
  });

  it('example 3 (derived, US units): Hb 15, SaO2 0.98, PaO2 100, SvO2 0.75, PvO2 40, CO 5 → CaO2 19.998, CvO2 15.195, DO2 999.9, VO2 240.15, O2ER 0.2402', () => {
    const cao2 = arterialO2Content(15, 0.98, 100);
    const cvo2 = arterialO2Content(15, 0.75, 40);
    expect(cao2).toBeCloseTo(19.998, 9);
    expect(cvo2).toBeCloseTo(15.195, 9);
    expect(oxygenDelivery(5, cao2)).toBeCloseTo(999.9, 9);
    expect(oxygenConsumption(5, cao2, cvo2)).toBeCloseTo(240.15, 9);
    expect(extractionRatio(cao2, cvo2)).toBeCloseTo(0.2402, 4);
  });

  it('the worksheet derives CaO2 and DO2 of example 3 from charted cells', () => {
    const ws = worksheet({ rows: [{ min: 0, cells: { hb: 15, sao2: 98, pao2: 100, co: 5, scvo2: 75 } }] });
    const v = deriveWorksheet(ws)[0]!.values;
    expect(v['cao2']).toBeCloseTo(19.998, 9);
    expect(v['do2']).toBeCloseTo(999.9, 9);
    // O2ER from saturations alone ≈ (0.98 − 0.75) / 0.98 (reference §11: dissolved O2 ignored).
    expect(v['o2er']).toBeCloseTo(0.2347, 4);
  });

  it('PaO2 charted in kPa is stored in mmHg, so the mmHg coefficient applies', () => {
    const ws = worksheet({ rows: [{ min: 0, cells: { hb: 14, sao2: 98, pao2: 13.3 * MMHG_PER_KPA } }] });
    const v = deriveWorksheet(ws)[0]!.values;
    expect(v['cao2']).toBeCloseTo(1.34 * 14 * 0.98 + 0.003 * 13.3 * MMHG_PER_KPA, 9);
  });
});

describe('lactate change (Nguyen 2004 / Jones 2010 formula; vectors reference §16; boundary §15 #19)', () => {
  it('4.0 → 3.5 = −12.5 %; 4.0 → 3.6 = −10.0 % exactly; 2.5 → 2.3 = −8.0 %', () => {
    expect(lactateChangePct(4.0, 3.5)).toBe(-12.5);
    // IEEE-754 gives (3.6 − 4.0)/4.0 × 100 = −9.999999999999998; rounding to 12 digits restores −10.
    expect((100 * (3.6 - 4.0)) / 4.0).not.toBe(-10);
    expect(lactateChangePct(4.0, 3.6)).toBe(-10);
    expect(lactateChangePct(4.0, 3.6) <= -10).toBe(true);
    expect(lactateChangePct(2.5, 2.3)).toBe(-8);
  });

  it('is derived against the first lactate of the worksheet', () => {
    const ws = worksheet({
      rows: [
        { min: 0, cells: { lactate: 4.0 } },
        { min: 60, cells: { hr: 100 } },
        { min: 120, cells: { lactate: 3.6 } },
      ],
    });
    const d = deriveWorksheet(ws);
    expect(d[0]!.values['lactate_change_pct']).toBe(0);
    expect(d[1]!.values['lactate_change_pct']).toBeUndefined();
    expect(d[2]!.values['lactate_change_pct']).toBe(-10);
  });
});

describe('fluids and urine', () => {
  it('30 mL/kg: 2100 mL for 70 kg reaches exactly 30 mL/kg (reference §16)', () => {
    const ws = worksheet({
      weightKg: 70,
      timeZeroMin: 0,
      rows: [
        { min: -30, cells: { fluid_ml: 500 } },
        { min: 30, cells: { fluid_ml: 1000 } },
        { min: 90, cells: { fluid_ml: 1100 } },
      ],
    });
    const d = deriveWorksheet(ws);
    expect(d[0]!.values['fluid_total_ml']).toBeUndefined(); // before time zero
    expect(d[1]!.values['fluid_total_ml']).toBe(1000);
    expect(d[2]!.values['fluid_total_ml']).toBe(2100);
    expect(d[2]!.values['fluid_ml_kg']).toBe(30);
  });

  it('urine 200 mL over 6 h at 80 kg = 0.417 mL/kg/h (reference §16)', () => {
    const ws = worksheet({
      weightKg: 80,
      rows: [
        { min: 0, cells: { uo_ml: 50 } },
        { min: 360, cells: { uo_ml: 200 } },
      ],
    });
    const d = deriveWorksheet(ws);
    expect(d[0]!.values['uo_ml_kg_h']).toBeUndefined(); // no previous row: interval unknown
    expect(d[1]!.values['uo_ml_kg_h']).toBeCloseTo(0.417, 3);
  });

  it('P/F, CO2 gap and shock index', () => {
    const ws = worksheet({ rows: [{ min: 0, cells: { pao2: 80, fio2: 0.4, pcvco2: 52, paco2: 44, hr: 120, sbp: 100 } }] });
    const v = deriveWorksheet(ws)[0]!.values;
    expect(v['pf_ratio']).toBe(200); // PaO2/FiO2, Sepsis-3 Table 1 respiration
    expect(v['co2_gap']).toBe(8); // PcvCO2 − PaCO2; > 6 mmHg suggests low flow (Vallée / van Beest, reference §11)
    expect(v['shock_index']).toBe(1.2); // HR / SBP, common practice, no source
  });
});
