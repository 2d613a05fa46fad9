import { describe, expect, it } from 'vitest';
import { validateFacts, type FactsFields } from '../../src/app/facts-form.js';

const NOW = Date.parse('2026-03-01T10:00:00Z');
const base: FactsFields = {
  label: 'ED bay 7',
  weightKg: '80',
  heightCm: '',
  sex: '',
  baselineSbp: '',
  useIdealWeight: false,
  timeZero: '08:15',
  basis: 'triage',
  reason: '',
  shockTime: '',
};

describe('validateFacts', () => {
  it('reads a bare clock time on the worksheet day in the worksheet offset', () => {
    const r = validateFacts({ ...base }, 60, NOW);
    expect(r.ok).toBe(true);
    if (!r.ok) return;
    // 08:15 at +01:00 is 07:15 UTC (common practice, no source: ISO 8601 offsets).
    expect(r.patch.timeZero).toEqual({ time: '2026-03-01T07:15:00.000Z', offset: 60, basis: 'triage' });
    expect(r.patch.weightKg).toBe(80);
  });

  it('gives a message at each bad field and nothing to save', () => {
    const r = validateFacts({ ...base, label: ' ', weightKg: 'heavy', timeZero: '25:99' }, 0, NOW);
    expect(r.ok).toBe(false);
    if (r.ok) return;
    expect(r.errors.label).toMatch(/bed or case code/);
    expect(r.errors.weightKg).toMatch(/number in kg/);
    expect(r.errors.timeZero).toMatch(/not a clock time/);
  });

  it('asks for a reason when time zero is based on something other than the listed bases', () => {
    const r = validateFacts({ ...base, basis: 'other' }, 0, NOW);
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.errors.reason).toMatch(/why/);
  });

  it('warns when a label looks like a record number or a name, without refusing it', () => {
    const r = validateFacts({ ...base, label: 'MRN 00123456' }, 0, NOW);
    expect(r.ok && r.warnings.label).toMatch(/name or a record number/);
    const n = validateFacts({ ...base, label: 'Jane Doe' }, 0, NOW);
    expect(n.ok && n.warnings.label).toMatch(/name or a record number/);
    const ok = validateFacts({ ...base, label: 'Resus 2' }, 0, NOW);
    expect(ok.ok && ok.warnings.label).toBeFalsy();
  });

  it('refuses a time zero in the future', () => {
    const r = validateFacts({ ...base, timeZero: '2026-03-01T12:00Z' }, 0, NOW);
    expect(r.ok).toBe(false);
  });

  it('refuses a weight outside 1–400 kg', () => {
    const r = validateFacts({ ...base, weightKg: '900' }, 0, NOW);
    expect(!r.ok && r.errors.weightKg).toMatch(/between 1 and 400/);
  });
});
