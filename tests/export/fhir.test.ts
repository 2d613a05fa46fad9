// FHIR R4 export. Validated (tests/export/fhir-validate.ts) with the `fhir` npm package (FHIR.js, Lantana), which checks the
// structure, cardinality and required bindings against the R4 (v4.0.1) StructureDefinitions it
// ships. It carries no LOINC, so LOINC codes give "not found in value set" warnings (the
// observation-codes binding is example strength); codes are checked here against the reference
// file §14a table instead, plus the LOINC mod-10 check digit.
import type { Bundle, FhirResource, MedicationAdministration, Observation } from 'fhir/r4';
import { describe, expect, it } from 'vitest';
import { LOCAL_MEASURE_SYSTEM, LOINC, LOINC_BODY, stableUuid, worksheetToFhir } from '../../src/export/fhir.js';
import { demoWorksheet } from '../../src/app/demo-scenario.js';
import { MEASURES } from '../../src/sheet/measures.js';
import { fhirProblems } from './fhir-validate.js';
import { fixtureWorksheet } from './fixture.js';

// Reference file §14a (clinical-check-values.md, "LOINC codes (UCUM units)"): the confirmed
// codes and UCUM units, transcribed row by row.
const REFERENCE_14A: Record<string, { loinc: string[]; ucum: string }> = {
  map: { loinc: ['8478-0'], ucum: 'mm[Hg]' },
  sbp: { loinc: ['8480-6'], ucum: 'mm[Hg]' },
  dbp: { loinc: ['8462-4'], ucum: 'mm[Hg]' },
  hr: { loinc: ['8867-4'], ucum: '/min' },
  rr: { loinc: ['9279-1'], ucum: '/min' },
  temp: { loinc: ['8310-5'], ucum: 'Cel' },
  spo2: { loinc: ['2708-6', '59408-5'], ucum: '%' },
  lactate: { loinc: ['32693-4'], ucum: 'mmol/L' },
  scvo2: { loinc: ['97549-0'], ucum: '%' },
  svo2: { loinc: ['19224-5'], ucum: '%' },
  hb: { loinc: ['718-7'], ucum: 'g/dL' },
  cvp: { loinc: ['60985-9'], ucum: 'mm[Hg]' },
  gcs: { loinc: ['9269-2'], ucum: '{score}' },
  creatinine: { loinc: ['2160-0'], ucum: 'mg/dL' },
  bilirubin: { loinc: ['1975-2'], ucum: 'mg/dL' },
  platelets: { loinc: ['777-3'], ucum: '10*3/uL' },
  wbc: { loinc: ['6690-2'], ucum: '10*3/uL' },
  pao2: { loinc: ['2703-7'], ucum: 'mm[Hg]' },
};
const REFERENCE_14A_BODY = { weight: '29463-7', height: '8302-2', bpPanel: '85354-9' };

/**
 * LOINC check digit: mod 10 over the digits before the hyphen, doubling every other digit from
 * the right (LOINC Users' Guide, check digit appendix; from memory, worked by hand on 8867-4).
 */
function loincCheckDigitOk(code: string): boolean {
  const m = /^(\d+)-(\d)$/.exec(code);
  if (!m) return false;
  let sum = 0;
  const digits = m[1]!.split('').reverse().map(Number);
  digits.forEach((d, i) => {
    const v = i % 2 === 0 ? d * 2 : d;
    sum += v > 9 ? v - 9 : v;
  });
  return (10 - (sum % 10)) % 10 === Number(m[2]);
}

function resources(b: Bundle): FhirResource[] {
  return (b.entry ?? []).map((e) => e.resource!);
}
function observations(b: Bundle): Observation[] {
  return resources(b).filter((r): r is Observation => r.resourceType === 'Observation');
}
function administrations(b: Bundle): MedicationAdministration[] {
  return resources(b).filter((r): r is MedicationAdministration => r.resourceType === 'MedicationAdministration');
}

describe('LOINC codes (reference file §14a)', () => {
  it('every code in the export table is the one in §14a, and only §14a keys have one', () => {
    expect(Object.keys(LOINC).sort()).toEqual(Object.keys(REFERENCE_14A).sort());
    for (const [key, codes] of Object.entries(LOINC)) {
      expect(
        codes.map((c) => c.code),
        key,
      ).toEqual(REFERENCE_14A[key]!.loinc);
    }
    expect(LOINC_BODY.weight.code).toBe(REFERENCE_14A_BODY.weight);
    expect(LOINC_BODY.height.code).toBe(REFERENCE_14A_BODY.height);
    expect(LOINC_BODY.bpPanel.code).toBe(REFERENCE_14A_BODY.bpPanel);
  });
  it('the canonical units of those measures are the §14a UCUM units', () => {
    for (const [key, ref] of Object.entries(REFERENCE_14A)) expect(MEASURES.get(key)!.unit!.ucum, key).toBe(ref.ucum);
  });
  it('every code has a valid LOINC check digit (catches a typo)', () => {
    const all = [
      ...Object.values(LOINC)
        .flat()
        .map((c) => c.code),
      ...Object.values(REFERENCE_14A_BODY),
    ];
    for (const c of all) expect(loincCheckDigitOk(c), c).toBe(true);
    // The check itself can fail: a transposed digit is caught.
    expect(loincCheckDigitOk('8876-4')).toBe(false);
  });
  it('CRT (no LOINC confirmed in §14a) uses the local code system', () => {
    const b = worksheetToFhir(fixtureWorksheet(), { atMs: 0 });
    const crt = observations(b).find((o) => o.code.coding?.[0]?.code === 'crt');
    expect(crt?.code.coding?.[0]?.system).toBe(LOCAL_MEASURE_SYSTEM);
    expect(crt?.valueQuantity).toMatchObject({ value: 4.5, code: 's', system: 'http://unitsofmeasure.org' });
  });
});

describe('worksheetToFhir on the fixture', () => {
  const ws = fixtureWorksheet();
  const atMs = Date.parse('2026-03-01T12:00:00Z');
  const bundle = worksheetToFhir(ws, { atMs });

  it('passes the FHIR R4 validator (fhir npm package), as a bundle and resource by resource', () => {
    expect(fhirProblems(bundle)).toEqual([]);
    for (const r of resources(bundle)) expect(fhirProblems(r), r.resourceType).toEqual([]);
  });

  it('the validator is live: it rejects a broken resource', () => {
    const broken = { resourceType: 'MedicationAdministration', status: 'given', effectiveDateTime: 'yesterday' };
    expect(fhirProblems(broken).length).toBeGreaterThan(0);
  });

  it('is a collection with a timestamp in the worksheet offset, and no Patient or identifiers', () => {
    expect(bundle.type).toBe('collection');
    expect(bundle.timestamp).toBe('2026-03-01T13:00:00+01:00');
    expect(resources(bundle).some((r) => r.resourceType === 'Patient')).toBe(false);
    expect(JSON.stringify(bundle)).not.toContain('"identifier"');
  });

  it('has unique urn:uuid fullUrls and derivedFrom references that resolve inside the bundle', () => {
    const urls = (bundle.entry ?? []).map((e) => e.fullUrl!);
    expect(new Set(urls).size).toBe(urls.length);
    for (const u of urls) expect(u).toMatch(/^urn:uuid:[0-9a-f]{8}-[0-9a-f]{4}-8[0-9a-f]{3}-[89ab][0-9a-f]{3}-[0-9a-f]{12}$/);
    const refs = observations(bundle)
      .flatMap((o) => o.derivedFrom ?? [])
      .map((r) => r.reference!);
    expect(refs.length).toBeGreaterThan(0);
    for (const r of refs) expect(urls).toContain(r);
  });

  it('is deterministic', () => {
    expect(JSON.stringify(worksheetToFhir(fixtureWorksheet(), { atMs }))).toBe(JSON.stringify(bundle));
    expect(stableUuid('a')).toBe(stableUuid('a'));
    expect(stableUuid('a')).not.toBe(stableUuid('b'));
  });

  it('writes every coded observation with its §14a code and UCUM unit', () => {
    let checked = 0;
    for (const o of observations(bundle)) {
      const parts = o.component ? o.component : [o];
      for (const p of parts) {
        const loinc = p.code.coding?.filter((c) => c.system === 'http://loinc.org').map((c) => c.code) ?? [];
        const key = Object.keys(REFERENCE_14A).find((k) => REFERENCE_14A[k]!.loinc[0] === loinc[0]);
        if (!key || !p.valueQuantity) continue;
        expect(loinc).toEqual(REFERENCE_14A[key]!.loinc);
        expect(p.valueQuantity.system).toBe('http://unitsofmeasure.org');
        expect(p.valueQuantity.code).toBe(REFERENCE_14A[key]!.ucum);
        checked += 1;
      }
    }
    expect(checked).toBeGreaterThan(15);
  });

  it('writes effective times with the row offset and the right category', () => {
    const lactate = observations(bundle).filter((o) => o.code.coding?.[0]?.code === '32693-4');
    expect(lactate.map((o) => o.effectiveDateTime)).toEqual(['2026-03-01T08:10:00+01:00', '2026-03-01T10:30:00+01:00']);
    expect(lactate[0]!.category?.[0]?.coding?.[0]?.code).toBe('laboratory');
    expect(lactate[0]!.interpretation?.[0]?.coding?.[0]?.code).toBe('H');
    const hr = observations(bundle).find((o) => o.code.coding?.[0]?.code === '8867-4');
    expect(hr?.category?.[0]?.coding?.[0]?.code).toBe('vital-signs');
  });

  it('writes a blood pressure panel with SBP/DBP components when both are charted', () => {
    const bp = observations(bundle).find((o) => o.code.coding?.[0]?.code === '85354-9');
    expect(bp?.component?.map((c) => [c.code.coding?.[0]?.code, c.valueQuantity?.value])).toEqual([
      ['8480-6', 82],
      ['8462-4', 44],
    ]);
    // The estimated MAP is derived from it: 44 + (82 - 44)/3 = 56.67 (reference file §12 formula),
    // written with one decimal more than shown (0 + 1): 56.7.
    const est = observations(bundle).find((o) => o.code.coding?.[0]?.code === '8478-0' && o.derivedFrom);
    expect(est?.valueQuantity?.value).toBe(56.7);
    expect(est?.derivedFrom?.[0]?.reference).toBe((bundle.entry ?? []).find((e) => e.resource === bp)?.fullUrl);
  });

  it('writes antibiotics, infusion rates and fluids as MedicationAdministration', () => {
    const ma = administrations(bundle);
    const abx = ma.find((m) => m.medicationCodeableConcept?.text === 'piperacillin-tazobactam 4.5 g');
    expect(abx?.effectiveDateTime).toBe('2026-03-01T08:25:00+01:00');
    // Vasopressin in [iU]/min: in UCUM `U` is the enzyme unit (reference file §14a UCUM notes).
    const vaso = ma.filter((m) => m.medicationCodeableConcept?.text === 'Vasopressin');
    expect(vaso.length).toBe(2);
    expect(vaso[0]!.dosage?.rateQuantity).toMatchObject({ value: 0.03, code: '[iU]/min', system: 'http://unitsofmeasure.org' });
    const ne = ma.filter((m) => m.medicationCodeableConcept?.text === 'Norepinephrine');
    expect(ne.map((m) => [m.dosage?.rateQuantity?.value, m.dosage?.rateQuantity?.code, m.status])).toEqual([
      [0.08, 'ug/kg/min', 'completed'],
      [0.15, 'ug/kg/min', 'completed'],
      [0.12, 'ug/kg/min', 'in-progress'],
    ]);
    expect(ne[0]!.effectivePeriod).toEqual({ start: '2026-03-01T09:05:00+01:00', end: '2026-03-01T09:40:00+01:00' });
    // Fluids: the amount since the previous row, so the period runs from the previous row to this one.
    const fluids = ma.filter((m) => m.medicationCodeableConcept?.text === 'Crystalloid');
    expect(fluids.map((m) => [m.dosage?.dose?.value, m.dosage?.dose?.code, m.effectivePeriod?.start, m.effectivePeriod?.end])).toEqual([
      [1000, 'mL', '2026-03-01T08:10:00+01:00', '2026-03-01T08:25:00+01:00'],
      [1400, 'mL', '2026-03-01T08:25:00+01:00', '2026-03-01T09:05:00+01:00'],
    ]);
  });

  it('keeps a hostile note as plain data (JSON is not interpreted)', () => {
    const note = observations(bundle).find((o) => o.code.coding?.[0]?.code === 'note');
    expect(note?.valueString).toBe('=HYPERLINK("http://example.invalid","x")');
  });

  it('marks a value corrected after entry as amended', async () => {
    const { setCell } = await import('../../src/sheet/worksheet.js');
    const { FixedClock } = await import('../../src/sheet/clock.js');
    const w = fixtureWorksheet();
    const row = w.rows.find((r) => r.cells['lactate'])!;
    const fixed = setCell(
      { clock: new FixedClock(Date.parse('2026-03-01T11:00:00Z')), newId: () => 'fix-1' },
      w,
      row.id,
      'lactate',
      { value: 4.4, flag: 'high' },
      'typo',
    ).worksheet;
    const lac = observations(worksheetToFhir(fixed, { atMs })).find((o) => o.code.coding?.[0]?.code === '32693-4');
    expect(lac?.status).toBe('amended');
    expect(lac?.valueQuantity?.value).toBe(4.4);
  });
});

describe('worksheetToFhir on the demo worksheet', () => {
  const now = Date.parse('2026-03-01T10:10:00Z');
  let n = 0;
  const ws = demoWorksheet(now, () => `demo-${++n}`, 60);
  const bundle = worksheetToFhir(ws, { atMs: now });

  it('passes the FHIR R4 validator', () => {
    expect(fhirProblems(bundle)).toEqual([]);
    for (const r of resources(bundle)) expect(fhirProblems(r), r.resourceType).toEqual([]);
  });

  it('is tagged as invented demo data', () => {
    expect(bundle.meta?.tag?.[0]?.code).toBe('fictional-demo');
  });

  it('holds every charted number of the demo, coded, with the demo time zero', () => {
    // One observation (or a BP panel component) per charted number that is not a drug or a volume given.
    const numbers = ws.rows.flatMap((r) =>
      Object.entries(r.cells).filter(
        ([k, c]) =>
          typeof c.value === 'number' &&
          !['fluid_ml', 'blood_ml', 'norepinephrine', 'epinephrine', 'phenylephrine', 'dopamine', 'dobutamine', 'vasopressin'].includes(k),
      ),
    );
    const charted = observations(bundle).filter(
      (o) => !o.derivedFrom && !o.method && o.effectiveDateTime !== undefined && (o.valueQuantity || o.component),
    );
    const count = charted.reduce((s, o) => s + (o.component ? o.component.length : 1), 0);
    // + weight and height observations.
    expect(count).toBe(numbers.length + 2);
    const t0 = observations(bundle).find((o) => o.code.coding?.[0]?.code === 'time-zero');
    expect(t0?.valueDateTime).toBe('2026-03-01T09:00:00+01:00');
    // Antibiotic and norepinephrine (three charted rates: 0.05, 0.08, 0.08).
    expect(administrations(bundle).filter((m) => m.medicationCodeableConcept?.text === 'piperacillin-tazobactam 4.5 g IV')).toHaveLength(1);
    expect(
      administrations(bundle)
        .filter((m) => m.medicationCodeableConcept?.text === 'Norepinephrine')
        .map((m) => m.dosage?.rateQuantity?.value),
    ).toEqual([0.05, 0.08, 0.08]);
    // Crystalloid 500 + 600 + 1000 mL = 2100 mL = 30 mL/kg x 70 kg (reference file §16).
    const fluids = administrations(bundle).filter((m) => m.medicationCodeableConcept?.text === 'Crystalloid');
    expect(fluids.reduce((s, m) => s + (m.dosage?.dose?.value ?? 0), 0)).toBe(2100);
  });
});
