/**
 * FHIR R4 (v4.0.1) export of a worksheet: a Bundle of type `collection`.
 *
 * What goes in (reference file §14):
 * - Observations for every charted number, in the canonical UCUM unit, with the LOINC code of
 *   reference file §14a where one is confirmed there; category `vital-signs`, `laboratory`,
 *   `survey` (GCS) or `exam` (http://terminology.hl7.org/CodeSystem/observation-category);
 *   effectiveDateTime with the row's own offset. A row with both SBP and DBP gives one blood
 *   pressure panel (85354-9) with SBP/DBP components, as the FHIR vital-signs profile does.
 *   SpO2 carries both 2708-6 and 59408-5 (FHIR oxygensat profile; US Core pulse oximetry).
 *   Alarming values carry an interpretation L/H (v3 ObservationInterpretation).
 *   A value corrected after it was first entered has status `amended`, otherwise `final`.
 * - Derived values (estimated MAP, shock index, urine rate, lactate change, P/F ...) as
 *   Observations with `method.text` = the formula and `derivedFrom` pointing at the observations
 *   they were computed from (reference file §14b).
 * - MedicationAdministration for antibiotics (medicationCodeableConcept.text = the drug as typed,
 *   effectiveDateTime), vasopressor infusions (dosage.rateQuantity in ug/kg/min, vasopressin
 *   in [iU]/min: in UCUM `U` is the enzyme unit, reference file §14a) and fluids (dosage.dose in
 *   mL, effectivePeriod from the previous row to this row, since volumes are amounts since the
 *   previous row).
 * - Procedures for blood cultures drawn and perfusion reassessed; an Observation for
 *   "infection suspected" and for free-text notes; weight and height (29463-7, 8302-2).
 * - Time zero as an Observation with a local code and valueDateTime (its basis in `note`).
 *
 * Decisions:
 * - Patient-free: no Patient resource and no identifiers. Resources that need a subject
 *   (MedicationAdministration and Procedure require one in R4) get a Reference holding only a
 *   `display` with the worksheet's label (a bed or case code). The receiving system attaches
 *   the data to its own patient; a caller that knows the patient may pass `subject`.
 *   No Condition (it would need a real subject) and no Encounter.
 * - Measures without a LOINC code confirmed in §14a (CRT, SaO2, Hct, INR, PaCO2, PcvCO2, FiO2,
 *   pH, HCO3, base excess, CO, urine output) are not skipped: they use our local code system
 *   `urn:tidemark:measure` with the measure key as code, so no charted value is lost and no
 *   code is guessed. Derived values use `urn:tidemark:derived`, except the estimated MAP which
 *   is a mean blood pressure (8478-0) with its method stated.
 * - Infusions: each charted non-zero rate is one administration with effectivePeriod from its
 *   row to the next row that charts the same drug (status `completed`), or open-ended (status
 *   `in-progress`) when no later row charts it. A zero rate only ends the previous period.
 * - A fluid amount in the first row has a period with an end only (its start is unknown).
 * - fullUrls are `urn:uuid:` values computed from the worksheet id, row id and key, so the same
 *   worksheet always gives the same bundle (no randomness, no clock except `atMs`).
 *
 * Pure: no DOM, no clock (the export moment comes in as `atMs`).
 */
import type {
  Bundle,
  BundleEntry,
  CodeableConcept,
  Coding,
  FhirResource,
  MedicationAdministration,
  Observation,
  ObservationComponent,
  Procedure,
  Quantity,
  Reference,
} from 'fhir/r4';
import { DERIVED, deriveWorksheet, type DerivedRow } from '../sheet/derived.js';
import { MEASURES, MEASURE_KEYS, type MeasureDef } from '../sheet/measures.js';
import type { Cell, Row, Worksheet } from '../sheet/model.js';
import { csvTime } from './csv.js';

export const LOINC_SYSTEM = 'http://loinc.org';
export const UCUM_SYSTEM = 'http://unitsofmeasure.org';
export const CATEGORY_SYSTEM = 'http://terminology.hl7.org/CodeSystem/observation-category';
export const INTERPRETATION_SYSTEM = 'http://terminology.hl7.org/CodeSystem/v3-ObservationInterpretation';
/** Our own code system for measures without a confirmed LOINC code (code = measure key). */
export const LOCAL_MEASURE_SYSTEM = 'urn:tidemark:measure';
/** Our own code system for derived values (code = derived key). */
export const LOCAL_DERIVED_SYSTEM = 'urn:tidemark:derived';
/** Our own code system for worksheet facts (time zero). */
export const LOCAL_FACT_SYSTEM = 'urn:tidemark:fact';

export interface LoincCode {
  code: string;
  display: string;
}

/**
 * LOINC codes by measure key: only codes marked confirmed in reference file §14a, with its
 * display (LOINC long name). Checked against that table in tests/export/fhir.test.ts.
 */
export const LOINC: Readonly<Record<string, readonly LoincCode[]>> = {
  map: [{ code: '8478-0', display: 'Mean blood pressure' }],
  sbp: [{ code: '8480-6', display: 'Systolic blood pressure' }],
  dbp: [{ code: '8462-4', display: 'Diastolic blood pressure' }],
  hr: [{ code: '8867-4', display: 'Heart rate' }],
  rr: [{ code: '9279-1', display: 'Respiratory rate' }],
  temp: [{ code: '8310-5', display: 'Body temperature' }],
  spo2: [
    { code: '2708-6', display: 'Oxygen saturation in Arterial blood' },
    { code: '59408-5', display: 'Oxygen saturation in Arterial blood by Pulse oximetry' },
  ],
  lactate: [{ code: '32693-4', display: 'Lactate [Moles/volume] in Blood' }],
  scvo2: [{ code: '97549-0', display: 'Oxygen saturation in Central venous blood' }],
  svo2: [{ code: '19224-5', display: 'Oxygen saturation in Mixed venous blood' }],
  hb: [{ code: '718-7', display: 'Hemoglobin [Mass/volume] in Blood' }],
  cvp: [{ code: '60985-9', display: 'Central venous pressure (CVP)' }],
  gcs: [{ code: '9269-2', display: 'Glasgow coma score total' }],
  creatinine: [{ code: '2160-0', display: 'Creatinine [Mass/volume] in Serum or Plasma' }],
  bilirubin: [{ code: '1975-2', display: 'Bilirubin.total [Mass/volume] in Serum or Plasma' }],
  platelets: [{ code: '777-3', display: 'Platelets [#/volume] in Blood by Automated count' }],
  wbc: [{ code: '6690-2', display: 'Leukocytes [#/volume] in Blood by Automated count' }],
  pao2: [{ code: '2703-7', display: 'Oxygen [Partial pressure] in Arterial blood' }],
};

/** Worksheet facts with LOINC codes (reference file §14a). */
export const LOINC_BODY = {
  weight: { code: '29463-7', display: 'Body weight' },
  height: { code: '8302-2', display: 'Body height' },
  bpPanel: { code: '85354-9', display: 'Blood pressure panel with all children optional' },
} as const;

type Category = 'vital-signs' | 'laboratory' | 'survey' | 'exam';
const CATEGORY_DISPLAY: Record<Category, string> = {
  'vital-signs': 'Vital Signs',
  laboratory: 'Laboratory',
  survey: 'Survey',
  exam: 'Exam',
};

/** Observation category of a charted number measure (common practice, no source). */
export function categoryOf(key: string): Category {
  if (key === 'gcs') return 'survey';
  if (key === 'crt' || key === 'uo_ml') return 'exam';
  if (['lactate', 'scvo2', 'svo2'].includes(key)) return 'laboratory';
  const def = MEASURES.get(key);
  if (def?.group === 'labs' || def?.group === 'gas') return 'laboratory';
  return 'vital-signs';
}

/** Keys exported as MedicationAdministration instead of Observation. */
const INFUSIONS = ['norepinephrine', 'epinephrine', 'phenylephrine', 'dopamine', 'dobutamine', 'vasopressin'];
const VOLUMES_GIVEN: Record<string, string> = { fluid_ml: 'Crystalloid', blood_ml: 'Blood product' };

/** Derived keys -> the charted keys they are computed from (for derivedFrom). */
const DERIVED_SOURCES: Readonly<Record<string, readonly string[]>> = {
  map: ['sbp', 'dbp'],
  shock_index: ['hr', 'sbp'],
  pulse_pressure: ['sbp', 'dbp'],
  uo_ml_kg_h: ['uo_ml'],
  cao2: ['hb', 'sao2', 'spo2', 'pao2'],
  do2: ['hb', 'sao2', 'spo2', 'pao2', 'co'],
  o2er: ['sao2', 'spo2', 'scvo2', 'svo2'],
  co2_gap: ['pcvco2', 'paco2'],
  pf_ratio: ['pao2', 'fio2'],
};

export interface FhirOptions {
  /** The export moment (Bundle.timestamp). */
  atMs: number;
  /** Subject for every resource; default a display-only reference with the worksheet label. */
  subject?: Reference;
  /** Include derived values. Default true. */
  derived?: boolean;
}

// --- deterministic ids -------------------------------------------------------------------------

/** 128-bit non-cryptographic hash (four 32-bit lanes of a multiply-xorshift mix). */
function hash128(text: string): [number, number, number, number] {
  let h1 = 0x6a09e667,
    h2 = 0xbb67ae85,
    h3 = 0x3c6ef372,
    h4 = 0xa54ff53a;
  for (let i = 0; i < text.length; i += 1) {
    const k = text.charCodeAt(i);
    h1 = h2 ^ Math.imul(h1 ^ k, 597399067);
    h2 = h3 ^ Math.imul(h2 ^ k, 2869860233);
    h3 = h4 ^ Math.imul(h3 ^ k, 951274213);
    h4 = h1 ^ Math.imul(h4 ^ k, 2716044179);
  }
  h1 = Math.imul(h3 ^ (h1 >>> 18), 597399067);
  h2 = Math.imul(h4 ^ (h2 >>> 22), 2869860233);
  h3 = Math.imul(h1 ^ (h3 >>> 17), 951274213);
  h4 = Math.imul(h2 ^ (h4 >>> 19), 2716044179);
  h1 ^= h2 ^ h3 ^ h4;
  h2 ^= h1;
  h3 ^= h1;
  h4 ^= h1;
  return [h1 >>> 0, h2 >>> 0, h3 >>> 0, h4 >>> 0];
}

/** A name-based UUID (RFC 9562 version 8, variant 10) for a text: same text, same UUID. */
export function stableUuid(text: string): string {
  const hex = hash128(text)
    .map((n) => n.toString(16).padStart(8, '0'))
    .join('');
  const v = `8${hex.slice(13, 16)}`;
  const variant = ((parseInt(hex[16]!, 16) & 0x3) | 0x8).toString(16) + hex.slice(17, 20);
  return `${hex.slice(0, 8)}-${hex.slice(8, 12)}-${v}-${variant}-${hex.slice(20, 32)}`;
}

// --- helpers ---------------------------------------------------------------------------------

function quantity(value: number, def: MeasureDef): Quantity {
  const u = def.unit!;
  return { value: round12(value), unit: u.label || u.ucum, system: UCUM_SYSTEM, code: u.ucum };
}

function round12(v: number): number {
  return Number(v.toPrecision(12));
}

function category(c: Category): CodeableConcept[] {
  return [{ coding: [{ system: CATEGORY_SYSTEM, code: c, display: CATEGORY_DISPLAY[c] }] }];
}

/** Plain-ASCII-safe label for a code display (LOINC displays are ASCII; ours may have ₂). */
function plainLabel(label: string): string {
  return label.replace(/₂/g, '2').replace(/₃/g, '3');
}

function measureCode(key: string): CodeableConcept {
  const def = MEASURES.get(key);
  const text = def ? plainLabel(def.label) : key;
  const loinc = LOINC[key];
  if (loinc) return { coding: loinc.map((l) => ({ system: LOINC_SYSTEM, code: l.code, display: l.display })), text };
  return { coding: [{ system: LOCAL_MEASURE_SYSTEM, code: key, display: text }], text };
}

function interpretation(cell: Cell): CodeableConcept[] | undefined {
  if (cell.flag === 'low') return [{ coding: [{ system: INTERPRETATION_SYSTEM, code: 'L', display: 'Low' }] }];
  if (cell.flag === 'high') return [{ coding: [{ system: INTERPRETATION_SYSTEM, code: 'H', display: 'High' }] }];
  return undefined;
}

function num(cell: Cell | undefined): number | undefined {
  return cell && typeof cell.value === 'number' ? cell.value : undefined;
}

/** Builds the bundle. */
export function worksheetToFhir(ws: Worksheet, options: FhirOptions): Bundle {
  const subject: Reference = options.subject ?? { display: `Worksheet ${ws.label} (no patient identifiers exported)` };
  const entries: BundleEntry<FhirResource>[] = [];
  const urlOf = (...parts: string[]): string => `urn:uuid:${stableUuid([ws.id, ...parts].join('|'))}`;
  const add = (fullUrl: string, resource: FhirResource): void => {
    entries.push({ fullUrl, resource });
  };
  const amended = new Set<string>();
  {
    const seen = new Set<string>();
    for (const e of ws.log) {
      if (e.kind !== 'cell' || !e.rowId || !e.key) continue;
      const k = `${e.rowId}|${e.key}`;
      if (seen.has(k)) amended.add(k);
      seen.add(k);
    }
  }
  const statusOf = (row: Row, key: string): Observation['status'] => (amended.has(`${row.id}|${key}`) ? 'amended' : 'final');
  const when = (row: Row): string => csvTime(row.time, row.offset);
  /** rowId|key -> fullUrl of the observation holding that value (for derivedFrom). */
  const obsUrl = new Map<string, string>();

  // Time zero and body size.
  const t0 = ws.timeZero;
  const factTime = t0 ? csvTime(t0.time, t0.offset) : ws.rows[0] ? when(ws.rows[0]) : csvTime(ws.createdAt, ws.displayOffset);
  if (t0) {
    const basis = t0.basis === 'other' ? `other: ${t0.reason ?? ''}` : t0.basis;
    const obs: Observation = {
      resourceType: 'Observation',
      status: 'final',
      code: { coding: [{ system: LOCAL_FACT_SYSTEM, code: 'time-zero', display: 'Sepsis time zero' }], text: 'Sepsis time zero' },
      subject,
      effectiveDateTime: factTime,
      valueDateTime: factTime,
      note: [{ text: `Basis: ${basis}` }],
    };
    add(urlOf('fact', 'time-zero'), obs);
  }
  if (ws.weightKg !== undefined) {
    add(urlOf('fact', 'weight'), {
      resourceType: 'Observation',
      status: 'final',
      category: category('vital-signs'),
      code: { coding: [{ system: LOINC_SYSTEM, ...LOINC_BODY.weight }], text: 'Body weight' },
      subject,
      effectiveDateTime: factTime,
      valueQuantity: { value: ws.weightKg, unit: 'kg', system: UCUM_SYSTEM, code: 'kg' },
    });
  }
  if (ws.heightCm !== undefined) {
    add(urlOf('fact', 'height'), {
      resourceType: 'Observation',
      status: 'final',
      category: category('vital-signs'),
      code: { coding: [{ system: LOINC_SYSTEM, ...LOINC_BODY.height }], text: 'Body height' },
      subject,
      effectiveDateTime: factTime,
      valueQuantity: { value: ws.heightCm, unit: 'cm', system: UCUM_SYSTEM, code: 'cm' },
    });
  }

  // Charted values, row by row.
  const rows = ws.rows;
  for (let i = 0; i < rows.length; i += 1) {
    const row = rows[i]!;
    const prev = i > 0 ? rows[i - 1] : undefined;
    const sbp = row.cells['sbp'];
    const dbp = row.cells['dbp'];
    const panel = num(sbp) !== undefined && num(dbp) !== undefined;
    if (panel) {
      const url = urlOf(row.id, 'bp');
      const comp = (key: 'sbp' | 'dbp', cell: Cell): ObservationComponent => {
        const c: ObservationComponent = { code: measureCode(key), valueQuantity: quantity(num(cell)!, MEASURES.get(key)!) };
        const interp = interpretation(cell);
        if (interp) c.interpretation = interp;
        return c;
      };
      add(url, {
        resourceType: 'Observation',
        status: statusOf(row, 'sbp') === 'amended' || statusOf(row, 'dbp') === 'amended' ? 'amended' : 'final',
        category: category('vital-signs'),
        code: { coding: [{ system: LOINC_SYSTEM, ...LOINC_BODY.bpPanel }], text: 'Blood pressure' },
        subject,
        effectiveDateTime: when(row),
        component: [comp('sbp', sbp!), comp('dbp', dbp!)],
      });
      obsUrl.set(`${row.id}|sbp`, url);
      obsUrl.set(`${row.id}|dbp`, url);
    }
    for (const key of MEASURE_KEYS) {
      const cell = row.cells[key];
      if (!cell) continue;
      const def = MEASURES.get(key)!;
      if (panel && (key === 'sbp' || key === 'dbp')) continue;
      if (INFUSIONS.includes(key)) continue; // handled below
      if (key in VOLUMES_GIVEN) {
        const v = num(cell);
        if (v === undefined) continue;
        const period: { start?: string; end: string } = { end: when(row) };
        if (prev) period.start = when(prev);
        const ma: MedicationAdministration = {
          resourceType: 'MedicationAdministration',
          status: 'completed',
          medicationCodeableConcept: { text: VOLUMES_GIVEN[key]! },
          subject,
          effectivePeriod: period,
          dosage: { dose: { value: round12(v), unit: 'mL', system: UCUM_SYSTEM, code: 'mL' } },
        };
        add(urlOf(row.id, key), ma);
        continue;
      }
      if (key === 'antibiotic' && typeof cell.value === 'string') {
        add(urlOf(row.id, key), {
          resourceType: 'MedicationAdministration',
          status: 'completed',
          medicationCodeableConcept: { text: cell.value },
          subject,
          effectiveDateTime: when(row),
          note: [{ text: 'Antibiotic given (as charted)' }],
        });
        continue;
      }
      if (key === 'cultures_drawn' || key === 'perfusion_reassessed') {
        const proc: Procedure = {
          resourceType: 'Procedure',
          status: 'completed',
          code: { coding: [{ system: LOCAL_MEASURE_SYSTEM, code: key, display: def.label }], text: def.label },
          subject,
          performedDateTime: when(row),
        };
        if (cell.text) proc.note = [{ text: cell.text }];
        add(urlOf(row.id, key), proc);
        continue;
      }
      const obs: Observation = {
        resourceType: 'Observation',
        status: statusOf(row, key),
        code: measureCode(key),
        subject,
        effectiveDateTime: when(row),
      };
      if (def.kind === 'number' && typeof cell.value === 'number') {
        obs.category = category(categoryOf(key));
        obs.valueQuantity = quantity(cell.value, def);
        const interp = interpretation(cell);
        if (interp) obs.interpretation = interp;
      } else if (cell.value === true) {
        obs.valueBoolean = true;
        if (cell.text) obs.note = [{ text: cell.text }];
      } else if (typeof cell.value === 'string') {
        obs.valueString = cell.value;
      } else {
        continue;
      }
      const url = urlOf(row.id, key);
      add(url, obs);
      obsUrl.set(`${row.id}|${key}`, url);
    }
  }

  // Infusions: one administration per charted non-zero rate, until the next charting of the drug.
  for (const key of INFUSIONS) {
    const def = MEASURES.get(key)!;
    const charted = rows.filter((r) => num(r.cells[key]) !== undefined);
    charted.forEach((row, j) => {
      const rate = num(row.cells[key])!;
      if (rate <= 0) return;
      const next = charted[j + 1];
      const period: { start: string; end?: string } = { start: when(row) };
      if (next) period.end = when(next);
      add(urlOf(row.id, key), {
        resourceType: 'MedicationAdministration',
        status: next ? 'completed' : 'in-progress',
        medicationCodeableConcept: { text: def.label },
        subject,
        effectivePeriod: period,
        dosage: { rateQuantity: quantity(rate, def), text: `${def.label} infusion` },
      });
    });
  }

  // Derived values.
  if (options.derived ?? true) {
    const derived: DerivedRow[] = deriveWorksheet(ws);
    const firstLactateRow = rows.find((r) => num(r.cells['lactate']) !== undefined);
    derived.forEach((d, i) => {
      const row = rows[i]!;
      for (const [key, value] of Object.entries(d.values)) {
        const def = DERIVED.get(key);
        if (!def || !Number.isFinite(value)) continue;
        // Only where the row adds something: not 0 % at the first lactate itself, and running
        // fluid totals only on rows that chart a volume.
        if (key === 'lactate_change_pct' && row === firstLactateRow) continue;
        if ((key === 'fluid_total_ml' || key === 'fluid_ml_kg') && num(row.cells['fluid_ml']) === undefined) continue;
        const sources = (DERIVED_SOURCES[key] ?? []).map((k) => obsUrl.get(`${row.id}|${k}`)).filter((u): u is string => u !== undefined);
        if (key === 'lactate_change_pct' && firstLactateRow) {
          for (const r of [firstLactateRow, row]) {
            const u = obsUrl.get(`${r.id}|lactate`);
            if (u && !sources.includes(u)) sources.push(u);
          }
        }
        const label = plainLabel(def.label);
        const coding: Coding[] =
          key === 'map'
            ? [{ system: LOINC_SYSTEM, code: '8478-0', display: 'Mean blood pressure' }]
            : [{ system: LOCAL_DERIVED_SYSTEM, code: key, display: label }];
        const obs: Observation = {
          resourceType: 'Observation',
          status: 'final',
          code: { coding, text: label },
          subject,
          effectiveDateTime: when(row),
          valueQuantity: {
            value: Number(value.toFixed(Math.min(20, def.decimals + 1))),
            unit: def.unitLabel || def.unit,
            system: UCUM_SYSTEM,
            code: def.unit,
          },
          method: { text: `Computed by Tidemark: ${plainLabel(def.formula)}` },
        };
        if (key === 'map') obs.category = category('vital-signs');
        if (sources.length) obs.derivedFrom = [...new Set(sources)].map((reference) => ({ reference }));
        add(urlOf(row.id, 'derived', key), obs);
      }
    });
  }

  const bundle: Bundle = {
    resourceType: 'Bundle',
    type: 'collection',
    timestamp: csvTime(new Date(options.atMs).toISOString(), ws.displayOffset),
    entry: entries,
  };
  if (ws.demo) {
    bundle.meta = { tag: [{ system: 'urn:tidemark:tag', code: 'fictional-demo', display: 'Invented demo scenario, not a real patient' }] };
  }
  return bundle;
}
