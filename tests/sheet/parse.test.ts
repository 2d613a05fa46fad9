// parseCellInput: what a person types becomes a canonical cell, or a refusal naming range and units.
import { describe, expect, it } from 'vitest';
import { parseCellInput } from '../../src/sheet/parse.js';

function value(key: string, text: string): number {
  const r = parseCellInput(key, text);
  if (!r.ok || !r.cell) throw new Error(`expected a value for ${key} "${text}": ${JSON.stringify(r)}`);
  return r.cell.value as number;
}

function refusal(key: string, text: string): string {
  const r = parseCellInput(key, text);
  if (r.ok) throw new Error(`expected a refusal for ${key} "${text}"`);
  return r.error;
}

describe('parseCellInput', () => {
  it('reads plain numbers in the canonical unit', () => {
    expect(value('hr', '85')).toBe(85);
    expect(value('lactate', '4.2')).toBe(4.2);
    expect(value('lactate', '4,2')).toBe(4.2); // decimal comma (common practice, no source)
  });

  it('keeps canonical values without an input note', () => {
    const r = parseCellInput('hr', '85');
    expect(r).toEqual({ ok: true, cell: { value: 85 } });
  });

  it('reads temperatures in °C and °F (°C = (°F − 32) × 5/9, reference §12)', () => {
    expect(value('temp', '38.5 C')).toBe(38.5);
    expect(value('temp', '101 F')).toBeCloseTo(((101 - 32) * 5) / 9, 9);
    expect(value('temp', '100.4 F')).toBe(38); // reference §12: 38.0 °C = 100.4 °F, exactly after rounding
    expect(value('temp', '96.8 F')).toBe(36); // 36.0 °C = 96.8 °F
    const r = parseCellInput('temp', '101 F');
    expect(r.ok && r.cell?.input).toBe('101 F'); // the typed text is kept
  });

  it('reads lactate in mg/dL with 9.008 (reference §8); 36 mg/dL ≈ 4 mmol/L (Jones 2010)', () => {
    expect(value('lactate', '36 mg/dL')).toBeCloseTo(36 / 9.008, 9);
    expect(value('lactate', '36 mg/dL')).toBeCloseTo(4, 1);
    expect(value('lactate', '18 mg/dl')).toBeCloseTo(2, 1); // Sepsis-3: 2 mmol/L ≈ 18 mg/dL
  });

  it('reads fluid volumes in litres (1 L = 1000 mL, SI)', () => {
    expect(value('fluid_ml', '1.2 L')).toBe(1200);
    expect(value('fluid_ml', '500')).toBe(500);
    expect(value('uo_ml', '0.25 l')).toBe(250);
  });

  it('reads a bare saturation ≤ 1 as a fraction and FiO2 > 1 as a percentage (common practice, no source)', () => {
    expect(value('spo2', '0.98')).toBe(98);
    expect(value('spo2', '98')).toBe(98);
    expect(value('sao2', '0.9')).toBe(90);
    expect(value('fio2', '40')).toBe(0.4);
    expect(value('fio2', '0.4')).toBe(0.4);
    expect(value('fio2', '100 %')).toBe(1);
  });

  it('converts other accepted units: kPa (7.50062), µmol/L (88.4, 17.1), g/L, cmH2O', () => {
    expect(value('pao2', '13.3 kPa')).toBeCloseTo(13.3 * 7.50062, 6); // reference §12
    expect(value('creatinine', '176.8 umol/L')).toBeCloseTo(2.0, 3); // reference §16
    expect(value('bilirubin', '205.2 µmol/L')).toBeCloseTo(12.0, 3); // reference §16
    expect(value('hb', '150 g/L')).toBe(15); // reference §12
    expect(value('cvp', '10 cmH2O')).toBeCloseTo(7.3556, 3); // NIST SP 811 (from memory)
    expect(value('wbc', '12 x10^9/L')).toBe(12); // reference §12
  });

  it('clears the cell on empty input', () => {
    expect(parseCellInput('hr', '  ')).toEqual({ ok: true, cell: null });
  });

  it('refuses values outside the plausible range, naming the range and unit', () => {
    const e = refusal('hr', '400');
    expect(e).toContain('0–300 /min');
    expect(e).toContain('Heart rate');
    expect(e).toContain('Not stored');
    const l = refusal('lactate', '50');
    expect(l).toContain('0–30 mmol/L');
    // A converted value is shown in the canonical unit too.
    const t = refusal('temp', '120 F');
    expect(t).toContain('°C');
    expect(t).toContain('25–45');
  });

  it('refuses text that is not a number, naming the accepted units', () => {
    const e = refusal('lactate', 'high');
    expect(e).toContain('not a number');
    expect(e).toContain('mmol/L or mg/dL');
  });

  it('refuses an unknown unit, naming the accepted ones', () => {
    const e = refusal('lactate', '4 kg');
    expect(e).toContain('Unknown unit "kg"');
    expect(e).toContain('mmol/L or mg/dL');
    expect(refusal('pao2', '80 psi')).toContain('mmHg or kPa');
  });

  it('keeps alarming values and flags them', () => {
    const high = parseCellInput('lactate', '5');
    expect(high.ok && high.cell?.flag).toBe('high');
    expect(high.ok && high.warning).toMatch(/above 4/);
    const low = parseCellInput('map', '58');
    expect(low.ok && low.cell?.flag).toBe('low');
    expect(low.ok && low.warning).toMatch(/below 65/);
    const normal = parseCellInput('map', '72');
    expect(normal.ok && normal.cell?.flag).toBeUndefined();
  });

  it('reads marks and text', () => {
    expect(parseCellInput('cultures_drawn', 'yes')).toEqual({ ok: true, cell: { value: true } });
    expect(parseCellInput('cultures_drawn', 'two sets')).toEqual({ ok: true, cell: { value: true, text: 'two sets' } });
    expect(parseCellInput('antibiotic', 'piperacillin-tazobactam')).toEqual({ ok: true, cell: { value: 'piperacillin-tazobactam' } });
  });
});
