/**
 * Body size: Devine ideal body weight, BMI, Mosteller body surface area, and the dosing weight
 * used for per-kg fluid goals. Pure.
 */
import type { Worksheet } from './model.js';

/** One inch in cm (international inch, exact). */
export const CM_PER_INCH = 2.54;

export interface IdealWeight {
  kg: number;
  /** Set when height is under 60 in (152.4 cm), where Devine extrapolates (reference file §12). */
  warning?: string;
}

/**
 * Devine ideal body weight: 50 kg (male) or 45.5 kg (female) + 2.3 kg per inch over 5 ft.
 * Devine BJ, Drug Intell Clin Pharm 1974;8:650–655.
 */
export function devineIdealWeight(heightCm: number, sex: 'male' | 'female'): IdealWeight {
  const inches = heightCm / CM_PER_INCH;
  const base = sex === 'male' ? 50 : 45.5;
  const kg = base + 2.3 * (inches - 60);
  if (inches < 60) {
    return {
      kg: Math.max(kg, 0),
      warning: 'Height under 5 ft (152.4 cm): the Devine formula is not defined there; check the dosing weight.',
    };
  }
  return { kg };
}

/** Body mass index, kg/m². */
export function bmi(weightKg: number, heightCm: number): number {
  const m = heightCm / 100;
  return weightKg / (m * m);
}

/** Mosteller body surface area, m²: √(height cm × weight kg / 3600). Mosteller RD, N Engl J Med 1987;317:1098. */
export function mostellerBsa(heightCm: number, weightKg: number): number {
  return Math.sqrt((heightCm * weightKg) / 3600);
}

/** DuBois body surface area, m²: 0.007184 × weight^0.425 × height^0.725. DuBois D, DuBois EF, Arch Intern Med 1916;17:863–871. */
export function duBoisBsa(heightCm: number, weightKg: number): number {
  return 0.007184 * Math.pow(weightKg, 0.425) * Math.pow(heightCm, 0.725);
}

/** Devine ideal body weight of a worksheet, or undefined without height and sex. */
export function idealWeightOf(ws: Pick<Worksheet, 'heightCm' | 'sex'>): IdealWeight | undefined {
  if (ws.heightCm === undefined || ws.sex === undefined) return undefined;
  return devineIdealWeight(ws.heightCm, ws.sex);
}

export interface DosingWeight {
  kg: number;
  basis: 'actual' | 'ideal';
  /** Why ideal weight was or was not used, for display. */
  explanation: string;
  warning?: string;
}

/**
 * SEP-1 allows ideal body weight for the 30 mL/kg volume when BMI > 30 and the clinician
 * documents it. Sources disagree on "> 30" versus ">= 30" (reference file §15 #18); Tidemark uses
 * "> 30" (the wording of the teaching slides quoted there) and says so where it is shown.
 */
export const IBW_BMI_THRESHOLD = 30;

/** The weight per-kg fluid goals use. Undefined when no weight is charted. */
export function dosingWeight(ws: Pick<Worksheet, 'weightKg' | 'heightCm' | 'sex' | 'useIdealWeight'>): DosingWeight | undefined {
  if (ws.weightKg === undefined) return undefined;
  const actual: DosingWeight = { kg: ws.weightKg, basis: 'actual', explanation: 'actual body weight' };
  if (!ws.useIdealWeight) return actual;
  if (ws.heightCm === undefined || ws.sex === undefined) {
    return { ...actual, explanation: 'actual body weight (ideal weight asked for, but height or sex is missing)' };
  }
  const b = bmi(ws.weightKg, ws.heightCm);
  if (!(b > IBW_BMI_THRESHOLD)) {
    return {
      ...actual,
      explanation: `actual body weight (ideal weight is allowed only when BMI > ${IBW_BMI_THRESHOLD}; BMI is ${b.toFixed(1)})`,
    };
  }
  const ibw = devineIdealWeight(ws.heightCm, ws.sex);
  const d: DosingWeight = {
    kg: ibw.kg,
    basis: 'ideal',
    explanation: `Devine ideal body weight (BMI ${b.toFixed(1)} > ${IBW_BMI_THRESHOLD})`,
  };
  if (ibw.warning) d.warning = ibw.warning;
  return d;
}
