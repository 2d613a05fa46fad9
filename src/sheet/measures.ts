/**
 * The measure catalog: every charted measure's key, label, canonical unit, the other units
 * accepted at entry (with their conversion to canonical), the plausible range (values outside
 * are refused) and the alarm band (values outside are kept but flagged).
 *
 * Units are written in UCUM (`ucum`) and shown with a plain label (`label`).
 * Conversion sources are named beside each factor and checked in tests/sheet/units.test.ts.
 */

export type MeasureKind = 'number' | 'mark' | 'text';

export type MeasureGroup = 'vitals' | 'perfusion' | 'labs' | 'gas' | 'fluids' | 'drugs' | 'bundle' | 'note';

/** A unit accepted at entry for a measure. */
export interface UnitDef {
  /** UCUM code. */
  readonly ucum: string;
  /** Label shown to people. */
  readonly label: string;
  /** Lower-case spellings a person may type after the number ("mg/dl", "mgdl"). */
  readonly aliases: readonly string[];
  /** Value in this unit to the canonical unit. */
  toCanonical(x: number): number;
  /** Canonical value to this unit. */
  fromCanonical(x: number): number;
}

export interface MeasureDef {
  readonly key: string;
  readonly label: string;
  /** Short column header. */
  readonly short: string;
  readonly kind: MeasureKind;
  readonly group: MeasureGroup;
  /** Canonical unit (number measures). */
  readonly unit?: UnitDef;
  /** Other units accepted at entry (number measures). */
  readonly alternates?: readonly UnitDef[];
  /** Values outside [min, max] (canonical) are refused at entry. */
  readonly range?: readonly [number, number];
  /** Values outside [low, high] (canonical) are kept but flagged as alarming. */
  readonly alarm?: { readonly low?: number; readonly high?: number };
  /** Decimal places shown. */
  readonly decimals?: number;
  /** Volumes: the amount since the previous row. */
  readonly interval?: boolean;
  /** Drug infusions: the rate running at that moment. */
  readonly rate?: boolean;
  /**
   * How a bare number without a unit is read when it is ambiguous: returns the unit the number
   * is taken to be in. Used for saturations and FiO2, typed as 0.98 or 98.
   */
  readonly bareUnit?: (x: number) => UnitDef;
}

function unit(ucum: string, label: string, aliases: readonly string[], factor = 1, offset = 0): UnitDef {
  return {
    ucum,
    label,
    aliases,
    toCanonical: (x) => x * factor + offset,
    fromCanonical: (x) => (x - offset) / factor,
  };
}

// --- Canonical units -------------------------------------------------------------------------
const mmHg = unit('mm[Hg]', 'mmHg', ['mmhg', 'mm hg', 'torr']);
const perMin = unit('/min', '/min', ['/min', 'bpm', 'per min', 'min-1']);
const percent = unit('%', '%', ['%', 'pct', 'percent']);
const score = unit('{score}', 'points', ['points', 'pts', 'pt']);
const seconds = unit('s', 's', ['s', 'sec', 'secs', 'seconds']);
const mmolL = unit('mmol/L', 'mmol/L', ['mmol/l', 'mmol']);
const gdL = unit('g/dL', 'g/dL', ['g/dl']);
const kPerUL = unit('10*3/uL', '×10³/µL', ['10*3/ul', '10^3/ul', 'k/ul', 'x10^3/ul', '×10³/µl', 'thou/ul', '10³/µl']);
const mgdL = unit('mg/dL', 'mg/dL', ['mg/dl']);
const ratio = unit('{ratio}', '', []);
const pH = unit('{pH}', '', []);
const Lmin = unit('L/min', 'L/min', ['l/min', 'lpm']);
const mL = unit('mL', 'mL', ['ml', 'cc']);
const ugkgmin = unit('ug/kg/min', 'µg/kg/min', ['ug/kg/min', 'mcg/kg/min', 'µg/kg/min', 'mcg/kg/minute']);
const Umin = unit('[iU]/min', 'U/min', ['u/min', 'units/min', 'iu/min']);
const fraction = unit('1', 'fraction', ['fraction', 'frac']);

// Temperature: °F = °C × 9/5 + 32 (definition of the Fahrenheit scale; reference file §12).
const celsius = unit('Cel', '°C', ['c', '°c', 'cel', 'degc', 'celsius']);
const fahrenheit: UnitDef = {
  ucum: '[degF]',
  label: '°F',
  aliases: ['f', '°f', 'degf', 'fahrenheit'],
  toCanonical: (f) => ((f - 32) * 5) / 9,
  fromCanonical: (c) => (c * 9) / 5 + 32,
};

// --- Alternate units with their published factors -----------------------------------------
/** Lactate: 1 mmol/L = 9.008 mg/dL (molar mass of lactic acid 90.08 g/mol, reference file §8). */
export const LACTATE_MG_DL_PER_MMOL_L = 9.008;
const lactateMgdL = unit('mg/dL', 'mg/dL', ['mg/dl'], 1 / LACTATE_MG_DL_PER_MMOL_L);

/** Creatinine: 1 mg/dL = 88.4 µmol/L (molar mass 113.12 g/mol, reference file §12). */
export const CREATININE_UMOL_PER_MG_DL = 88.4;
const creatinineUmol = unit('umol/L', 'µmol/L', ['umol/l', 'µmol/l', 'micromol/l'], 1 / CREATININE_UMOL_PER_MG_DL);

/** Bilirubin: 1 mg/dL = 17.1 µmol/L (molar mass 584.66 g/mol, reference file §12). */
export const BILIRUBIN_UMOL_PER_MG_DL = 17.1;
const bilirubinUmol = unit('umol/L', 'µmol/L', ['umol/l', 'µmol/l', 'micromol/l'], 1 / BILIRUBIN_UMOL_PER_MG_DL);

/** Hemoglobin: g/dL × 10 = g/L; g/dL × 0.6206 = mmol/L (monomer); reference file §12. */
export const HB_MMOL_PER_G_DL = 0.6206;
const hbGL = unit('g/L', 'g/L', ['g/l'], 1 / 10);
const hbMmol = unit('mmol/L', 'mmol/L', ['mmol/l'], 1 / HB_MMOL_PER_G_DL);

/** Pressure: 1 kPa = 7.50062 mmHg (reference file §12). */
export const MMHG_PER_KPA = 7.50062;
const kPa = unit('kPa', 'kPa', ['kpa'], MMHG_PER_KPA);

/** CVP in cmH2O: 1 cmH2O = 0.73556 mmHg (1 mmHg = 1.35951 cmH2O; common practice, no source). */
export const MMHG_PER_CMH2O = 0.73556;
const cmH2O = unit('cm[H2O]', 'cmH₂O', ['cmh2o', 'cm h2o', 'cmh₂o', 'cm'], MMHG_PER_CMH2O);

/** Cell counts: 10³/µL = 10⁹/L (reference file §12). */
const gigaPerL = unit('10*9/L', '×10⁹/L', ['10*9/l', '10^9/l', 'x10^9/l', '×10⁹/l', '10⁹/l']);

/** Volumes: 1 L = 1000 mL (SI). */
const litre = unit('L', 'L', ['l', 'litre', 'liter', 'litres', 'liters'], 1000);

/** Saturation typed as a fraction 0–1. */
const satFraction = unit('1', 'fraction', ['fraction', 'frac'], 100);
/** FiO2 typed as a percentage. */
const fio2Percent = unit('%', '%', ['%', 'pct', 'percent'], 1 / 100);

const satBare = (x: number): UnitDef => (x <= 1 ? satFraction : percent);
const fio2Bare = (x: number): UnitDef => (x > 1 ? fio2Percent : fraction);

// --- The catalog ----------------------------------------------------------------------------
// Ranges: the plausible range is what a human body and a bedside device can report; the alarm
// band is where a value is possible but alarming. Both are common practice, no single source.
const defs: MeasureDef[] = [
  {
    key: 'sbp',
    label: 'Systolic pressure',
    short: 'SBP',
    kind: 'number',
    group: 'vitals',
    unit: mmHg,
    range: [20, 300],
    alarm: { low: 90, high: 200 },
    decimals: 0,
  },
  {
    key: 'dbp',
    label: 'Diastolic pressure',
    short: 'DBP',
    kind: 'number',
    group: 'vitals',
    unit: mmHg,
    range: [10, 200],
    alarm: { low: 40, high: 120 },
    decimals: 0,
  },
  {
    key: 'map',
    label: 'Mean arterial pressure',
    short: 'MAP',
    kind: 'number',
    group: 'vitals',
    unit: mmHg,
    range: [15, 250],
    alarm: { low: 65, high: 130 },
    decimals: 0,
  },
  {
    key: 'hr',
    label: 'Heart rate',
    short: 'HR',
    kind: 'number',
    group: 'vitals',
    unit: perMin,
    range: [0, 300],
    alarm: { low: 40, high: 130 },
    decimals: 0,
  },
  {
    key: 'rr',
    label: 'Respiratory rate',
    short: 'RR',
    kind: 'number',
    group: 'vitals',
    unit: perMin,
    range: [0, 80],
    alarm: { low: 8, high: 30 },
    decimals: 0,
  },
  {
    key: 'temp',
    label: 'Temperature',
    short: 'Temp',
    kind: 'number',
    group: 'vitals',
    unit: celsius,
    alternates: [fahrenheit],
    range: [25, 45],
    alarm: { low: 35, high: 40 },
    decimals: 1,
  },
  {
    key: 'spo2',
    label: 'SpO₂ (pulse oximetry)',
    short: 'SpO₂',
    kind: 'number',
    group: 'vitals',
    unit: percent,
    alternates: [satFraction],
    range: [30, 100],
    alarm: { low: 90 },
    decimals: 0,
    bareUnit: satBare,
  },
  {
    key: 'sao2',
    label: 'SaO₂ (arterial)',
    short: 'SaO₂',
    kind: 'number',
    group: 'gas',
    unit: percent,
    alternates: [satFraction],
    range: [30, 100],
    alarm: { low: 90 },
    decimals: 0,
    bareUnit: satBare,
  },
  {
    key: 'gcs',
    label: 'Glasgow coma scale',
    short: 'GCS',
    kind: 'number',
    group: 'vitals',
    unit: score,
    range: [3, 15],
    alarm: { low: 8 },
    decimals: 0,
  },
  {
    key: 'crt',
    label: 'Capillary refill time',
    short: 'CRT',
    kind: 'number',
    group: 'perfusion',
    unit: seconds,
    range: [0, 30],
    alarm: { high: 3 },
    decimals: 1,
  },
  {
    key: 'cvp',
    label: 'Central venous pressure',
    short: 'CVP',
    kind: 'number',
    group: 'perfusion',
    unit: mmHg,
    alternates: [cmH2O],
    range: [-10, 40],
    alarm: { high: 20 },
    decimals: 0,
  },
  {
    key: 'lactate',
    label: 'Lactate',
    short: 'Lactate',
    kind: 'number',
    group: 'perfusion',
    unit: mmolL,
    alternates: [lactateMgdL],
    range: [0, 30],
    alarm: { high: 4 },
    decimals: 1,
  },
  {
    key: 'scvo2',
    label: 'ScvO₂ (central venous)',
    short: 'ScvO₂',
    kind: 'number',
    group: 'perfusion',
    unit: percent,
    alternates: [satFraction],
    range: [10, 100],
    alarm: { low: 50, high: 90 },
    decimals: 0,
    bareUnit: satBare,
  },
  {
    key: 'svo2',
    label: 'SvO₂ (mixed venous)',
    short: 'SvO₂',
    kind: 'number',
    group: 'perfusion',
    unit: percent,
    alternates: [satFraction],
    range: [10, 100],
    alarm: { low: 50, high: 90 },
    decimals: 0,
    bareUnit: satBare,
  },
  {
    key: 'hb',
    label: 'Hemoglobin',
    short: 'Hb',
    kind: 'number',
    group: 'labs',
    unit: gdL,
    alternates: [hbGL, hbMmol],
    range: [1, 25],
    alarm: { low: 7 },
    decimals: 1,
  },
  {
    key: 'hct',
    label: 'Hematocrit',
    short: 'Hct',
    kind: 'number',
    group: 'labs',
    unit: percent,
    range: [5, 75],
    alarm: { low: 21 },
    decimals: 0,
  },
  {
    key: 'wbc',
    label: 'White cells',
    short: 'WBC',
    kind: 'number',
    group: 'labs',
    unit: kPerUL,
    alternates: [gigaPerL],
    range: [0, 500],
    alarm: { low: 4, high: 12 },
    decimals: 1,
  },
  {
    key: 'platelets',
    label: 'Platelets',
    short: 'Plt',
    kind: 'number',
    group: 'labs',
    unit: kPerUL,
    alternates: [gigaPerL],
    range: [0, 2000],
    alarm: { low: 100 },
    decimals: 0,
  },
  {
    key: 'creatinine',
    label: 'Creatinine',
    short: 'Creat',
    kind: 'number',
    group: 'labs',
    unit: mgdL,
    alternates: [creatinineUmol],
    range: [0.1, 30],
    alarm: { high: 2 },
    decimals: 2,
  },
  {
    key: 'bilirubin',
    label: 'Bilirubin, total',
    short: 'Bili',
    kind: 'number',
    group: 'labs',
    unit: mgdL,
    alternates: [bilirubinUmol],
    range: [0, 60],
    alarm: { high: 2 },
    decimals: 1,
  },
  {
    key: 'inr',
    label: 'INR',
    short: 'INR',
    kind: 'number',
    group: 'labs',
    unit: ratio,
    range: [0.5, 20],
    alarm: { high: 1.5 },
    decimals: 1,
  },
  {
    key: 'pao2',
    label: 'PaO₂',
    short: 'PaO₂',
    kind: 'number',
    group: 'gas',
    unit: mmHg,
    alternates: [kPa],
    range: [15, 700],
    alarm: { low: 60 },
    decimals: 0,
  },
  {
    key: 'paco2',
    label: 'PaCO₂',
    short: 'PaCO₂',
    kind: 'number',
    group: 'gas',
    unit: mmHg,
    alternates: [kPa],
    range: [5, 200],
    alarm: { low: 25, high: 60 },
    decimals: 0,
  },
  {
    key: 'pcvco2',
    label: 'PcvCO₂ (central venous)',
    short: 'PcvCO₂',
    kind: 'number',
    group: 'gas',
    unit: mmHg,
    alternates: [kPa],
    range: [5, 200],
    decimals: 0,
  },
  {
    key: 'fio2',
    label: 'FiO₂',
    short: 'FiO₂',
    kind: 'number',
    group: 'gas',
    unit: fraction,
    alternates: [fio2Percent],
    range: [0.21, 1],
    decimals: 2,
    bareUnit: fio2Bare,
  },
  {
    key: 'ph',
    label: 'pH',
    short: 'pH',
    kind: 'number',
    group: 'gas',
    unit: pH,
    range: [6.5, 8],
    alarm: { low: 7.2, high: 7.6 },
    decimals: 2,
  },
  {
    key: 'hco3',
    label: 'Bicarbonate',
    short: 'HCO₃',
    kind: 'number',
    group: 'gas',
    unit: mmolL,
    range: [1, 60],
    alarm: { low: 15 },
    decimals: 0,
  },
  {
    key: 'base_excess',
    label: 'Base excess',
    short: 'BE',
    kind: 'number',
    group: 'gas',
    unit: mmolL,
    range: [-40, 40],
    alarm: { low: -10 },
    decimals: 0,
  },
  { key: 'co', label: 'Cardiac output', short: 'CO', kind: 'number', group: 'perfusion', unit: Lmin, range: [0.5, 25], decimals: 1 },
  {
    key: 'fluid_ml',
    label: 'Crystalloid given',
    short: 'Fluid',
    kind: 'number',
    group: 'fluids',
    unit: mL,
    alternates: [litre],
    range: [0, 10_000],
    decimals: 0,
    interval: true,
  },
  {
    key: 'blood_ml',
    label: 'Blood product given',
    short: 'Blood',
    kind: 'number',
    group: 'fluids',
    unit: mL,
    alternates: [litre],
    range: [0, 10_000],
    decimals: 0,
    interval: true,
  },
  {
    key: 'uo_ml',
    label: 'Urine output',
    short: 'Urine',
    kind: 'number',
    group: 'fluids',
    unit: mL,
    alternates: [litre],
    range: [0, 5_000],
    decimals: 0,
    interval: true,
  },
  {
    key: 'norepinephrine',
    label: 'Norepinephrine',
    short: 'Norepi',
    kind: 'number',
    group: 'drugs',
    unit: ugkgmin,
    range: [0, 5],
    alarm: { high: 0.5 },
    decimals: 2,
    rate: true,
  },
  {
    key: 'epinephrine',
    label: 'Epinephrine',
    short: 'Epi',
    kind: 'number',
    group: 'drugs',
    unit: ugkgmin,
    range: [0, 5],
    alarm: { high: 0.5 },
    decimals: 2,
    rate: true,
  },
  {
    key: 'phenylephrine',
    label: 'Phenylephrine',
    short: 'Phenyl',
    kind: 'number',
    group: 'drugs',
    unit: ugkgmin,
    range: [0, 20],
    alarm: { high: 5 },
    decimals: 2,
    rate: true,
  },
  {
    key: 'dopamine',
    label: 'Dopamine',
    short: 'Dopa',
    kind: 'number',
    group: 'drugs',
    unit: ugkgmin,
    range: [0, 50],
    alarm: { high: 20 },
    decimals: 1,
    rate: true,
  },
  {
    key: 'dobutamine',
    label: 'Dobutamine',
    short: 'Dobut',
    kind: 'number',
    group: 'drugs',
    unit: ugkgmin,
    range: [0, 40],
    alarm: { high: 20 },
    decimals: 1,
    rate: true,
  },
  {
    key: 'vasopressin',
    label: 'Vasopressin',
    short: 'Vaso',
    kind: 'number',
    group: 'drugs',
    unit: Umin,
    range: [0, 0.2],
    alarm: { high: 0.06 },
    decimals: 2,
    rate: true,
  },
  { key: 'infection_suspected', label: 'Infection suspected', short: 'Infection?', kind: 'mark', group: 'bundle' },
  { key: 'cultures_drawn', label: 'Blood cultures drawn', short: 'Cultures', kind: 'mark', group: 'bundle' },
  { key: 'perfusion_reassessed', label: 'Perfusion reassessed', short: 'Reassessed', kind: 'mark', group: 'bundle' },
  { key: 'antibiotic', label: 'Antibiotic given', short: 'Antibiotic', kind: 'text', group: 'bundle' },
  { key: 'note', label: 'Note', short: 'Note', kind: 'text', group: 'note' },
];

/** Every charted measure, keyed. */
export const MEASURES: ReadonlyMap<string, MeasureDef> = new Map(defs.map((d) => [d.key, d]));

/** Catalog order (for pickers). */
export const MEASURE_KEYS: readonly string[] = defs.map((d) => d.key);

/** The columns a new worksheet shows, in order. */
export const DEFAULT_COLUMNS: readonly string[] = [
  'map',
  'sbp',
  'dbp',
  'hr',
  'rr',
  'temp',
  'spo2',
  'lactate',
  'scvo2',
  'cvp',
  'crt',
  'uo_ml',
  'fluid_ml',
  'norepinephrine',
  'vasopressin',
  'cultures_drawn',
  'antibiotic',
  'perfusion_reassessed',
  'note',
];

/** Looks up a measure or throws with the bad key (programmer error). */
export function measure(key: string): MeasureDef {
  const def = MEASURES.get(key);
  if (!def) throw new Error(`Unknown measure key "${key}"; known keys are listed in src/sheet/measures.ts`);
  return def;
}

/** All units accepted for a measure, canonical first. */
export function unitsOf(def: MeasureDef): readonly UnitDef[] {
  return def.unit ? [def.unit, ...(def.alternates ?? [])] : [];
}
