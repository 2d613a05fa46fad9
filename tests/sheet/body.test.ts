// Body size: Devine ideal body weight, Mosteller and DuBois BSA, dosing weight.
import { describe, expect, it } from 'vitest';
import { bmi, CM_PER_INCH, devineIdealWeight, dosingWeight, duBoisBsa, idealWeightOf, mostellerBsa } from '../../src/sheet/body.js';

const inches = (n: number): number => n * CM_PER_INCH;

describe('Devine ideal body weight (Devine 1974; vectors from reference §16)', () => {
  it('male 70 in / 72 in / 170 cm = 73.0 / 77.6 / 65.94 kg', () => {
    expect(devineIdealWeight(inches(70), 'male').kg).toBeCloseTo(73.0, 6);
    expect(devineIdealWeight(inches(72), 'male').kg).toBeCloseTo(77.6, 6);
    expect(devineIdealWeight(170, 'male').kg).toBeCloseTo(65.94, 2);
  });

  it('170 cm differs from the ARDSNet metric form (66.02 kg) by the rounded 0.91 factor (reference §16)', () => {
    const ardsnetMetric = 50 + 0.91 * (170 - 152.4);
    expect(ardsnetMetric).toBeCloseTo(66.02, 2);
    expect(Math.abs(devineIdealWeight(170, 'male').kg - ardsnetMetric)).toBeLessThan(0.1);
  });

  it('female 64 in / 70 in = 54.7 / 68.5 kg (45.5 kg base, reference §15 #17)', () => {
    expect(devineIdealWeight(inches(64), 'female').kg).toBeCloseTo(54.7, 6);
    expect(devineIdealWeight(inches(70), 'female').kg).toBeCloseTo(68.5, 6);
  });

  it('exactly 60 in gives the base weight and no warning', () => {
    expect(devineIdealWeight(inches(60), 'male')).toEqual({ kg: 50 });
    expect(devineIdealWeight(inches(60), 'female')).toEqual({ kg: 45.5 });
  });

  it('under 60 in warns and never goes negative (reference §12: flag it, common practice)', () => {
    const r = devineIdealWeight(inches(58), 'female');
    expect(r.warning).toMatch(/5 ft/);
    expect(r.kg).toBeCloseTo(45.5 - 4.6, 6);
    expect(devineIdealWeight(40, 'female').kg).toBe(0);
  });

  it('idealWeightOf needs height and sex', () => {
    expect(idealWeightOf({ heightCm: inches(70), sex: 'male' })?.kg).toBeCloseTo(73.0, 6);
    expect(idealWeightOf({ heightCm: 170 })).toBeUndefined();
  });
});

describe('body surface area (vectors from reference §16)', () => {
  it('Mosteller 170 cm 70 kg = 1.818 m²; 180 cm 80 kg = 2.000 m² (Mosteller 1987)', () => {
    expect(mostellerBsa(170, 70)).toBeCloseTo(1.818, 3);
    expect(mostellerBsa(180, 80)).toBeCloseTo(2.0, 3);
  });

  it('DuBois 170 cm 70 kg = 1.810 m²; 180 cm 80 kg = 1.996 m² (DuBois 1916)', () => {
    expect(duBoisBsa(170, 70)).toBeCloseTo(1.81, 3);
    expect(duBoisBsa(180, 80)).toBeCloseTo(1.996, 3);
  });
});

describe('dosing weight (SEP-1 IBW allowance, reference §3b, §15 #18)', () => {
  it('uses actual weight unless ideal weight is asked for', () => {
    expect(dosingWeight({ weightKg: 112.5, heightCm: 170, sex: 'male', useIdealWeight: false })?.kg).toBe(112.5);
  });

  it('uses Devine ideal weight when asked for and BMI > 30', () => {
    const d = dosingWeight({ weightKg: 112.5, heightCm: 170, sex: 'male', useIdealWeight: true });
    expect(d?.basis).toBe('ideal');
    expect(d?.kg).toBeCloseTo(65.94, 2);
    // 30 mL/kg of 112.5 kg is 3375 mL (reference §16); of the ideal weight it is about 1978 mL.
    expect(30 * 112.5).toBe(3375);
  });

  it('BMI exactly 30 keeps actual weight (Tidemark reads the rule as "> 30"; §15 #18)', () => {
    const heightCm = 170;
    const weightKg = 30 * (heightCm / 100) ** 2; // BMI 30.0
    expect(bmi(weightKg, heightCm)).toBeCloseTo(30, 9);
    const d = dosingWeight({ weightKg, heightCm, sex: 'female', useIdealWeight: true });
    expect(d?.basis).toBe('actual');
    expect(d?.explanation).toMatch(/BMI > 30/);
  });

  it('is undefined without a weight', () => {
    expect(dosingWeight({ useIdealWeight: false })).toBeUndefined();
  });
});
