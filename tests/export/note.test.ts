// Note text. What "survives a paste into any record system" is taken as: printable ASCII only
// (RFC 20 / ANSI X3.4 printable range 0x20-0x7E), no tabs, LF line ends, lines of at most 72
// characters (the usual plain-text line width, as RFC 2822 §2.1.1 recommends 78 at most):
// common practice, no single source. Goal statuses come from the goal engine and are compared
// with it here; the golden file was read line by line against the demo course
// (src/app/demo-scenario.ts) before it was committed.
import { existsSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { demoWorksheet } from '../../src/app/demo-scenario.js';
import { NOTE_WIDTH, toAscii, worksheetNote, wrap } from '../../src/export/note.js';
import { evaluate, worksheetSetIds } from '../../src/goals/index.js';
import { fixtureWorksheet } from './fixture.js';

const GOLDEN = join(import.meta.dirname, 'golden', 'demo-note.txt');
/** Fixed moment of the golden note: the demo's time zero is 130 min earlier (09:00 +01:00). */
const DEMO_NOW = Date.parse('2026-03-01T10:10:00Z');

function demo() {
  let n = 0;
  return demoWorksheet(DEMO_NOW, () => `demo-${++n}`, 60);
}

function checkPasteSafe(text: string): void {
  expect(text.endsWith('\n')).toBe(true);
  for (const line of text.slice(0, -1).split('\n')) {
    expect(line.length, line).toBeLessThanOrEqual(NOTE_WIDTH);
    expect(line, line).toMatch(/^[\x20-\x7e]*$/);
    expect(line, 'no trailing spaces').toBe(line.trimEnd());
  }
}

describe('toAscii and wrap', () => {
  it('folds the characters the app uses to their decided ASCII fallbacks', () => {
    expect(toAscii('0.1 µg/kg/min')).toBe('0.1 ug/kg/min');
    expect(toAscii('ScvO₂ ≥ 70 %; MAP ≤ 65')).toBe('ScvO2 >= 70 %; MAP <= 65');
    expect(toAscii('38.9 °C, 15 ×10³/µL, −5, 8–12')).toBe('38.9 C, 15 x103/uL, -5, 8-12');
    expect(toAscii('céfépime')).toBe('cefepime');
    expect(toAscii('a\tb\r\nc')).toBe('a b  c');
    expect(toAscii('漢')).toBe('?');
  });
  it('wraps at the width with a hanging indent and cuts a word longer than a line', () => {
    const lines = wrap('word '.repeat(40), 'MET      ', '         ');
    for (const l of lines) expect(l.length).toBeLessThanOrEqual(72);
    expect(lines[0]!.startsWith('MET      word')).toBe(true);
    expect(lines[1]!.startsWith('         word')).toBe(true);
    const long = wrap('x'.repeat(200), '- ', '  ');
    expect(long.map((l) => l.length)).toEqual([72, 72, 62]);
  });
});

describe('worksheetNote on the fixture', () => {
  const ws = fixtureWorksheet();
  const atMs = Date.parse('2026-03-01T10:00:00Z'); // 11:00 +01:00
  const note = worksheetNote(ws, { atMs });

  it('is paste-safe and deterministic', () => {
    checkPasteSafe(note);
    expect(worksheetNote(fixtureWorksheet(), { atMs })).toBe(note);
  });

  it('has the caution, label, time zero with basis and the elapsed time', () => {
    expect(note).toContain(
      'CAUTION: Decision support only. Defaults follow published guidance and\nmust be checked against local protocols and licensed clinical judgment.',
    );
    expect(note).toContain('Worksheet: Bed 7 (fictional)');
    expect(note).toContain('Time zero: 2026-03-01 08:00 +01:00, basis: triage.');
    expect(note).toContain('Summary as of: 2026-03-01 11:00 +01:00, 3 h 0 min after time zero.');
  });

  it('gives every goal of the engine with its status word', () => {
    const goals = evaluate(ws, worksheetSetIds(ws), atMs);
    const word = { met: 'MET', pending: 'PENDING', missed: 'MISSED', 'not-applicable': 'N/A', 'no-data': 'NO DATA' } as const;
    for (const g of goals) {
      const start = `${word[g.status].padEnd(9)}${toAscii(g.label)}`.slice(0, 40);
      expect(note, g.id).toContain(start);
    }
  });

  it('sums fluids per kg of the dosing weight and the lactate trend', () => {
    // 1000 + 1400 mL = 2400 mL; / 80 kg = 30 mL/kg (reference file §16: 30 mL/kg x 80 kg = 2400 mL).
    expect(note).toContain('Crystalloid since time zero: 2400 mL = 30 mL/kg of 80 kg (actual body');
    // (2.9 - 4.6) / 4.6 = -37 % (reference file §8 formula, sign: negative = falling).
    expect(note).toContain('- 10:30 2.9 mmol/L (-37% from first)');
  });

  it('gives the peak vasopressor dose as norepinephrine equivalent', () => {
    // NE 0.15 + vasopressin 0.03 U/min x 2.5 = 0.225 ug/kg/min (Goradia 2021, reference file §10).
    expect(note).toMatch(/Peak dose: 0\.225 ug\/kg\/min norepinephrine equivalent, first reached at\s+09:40/);
    expect(note).toMatch(/Running at the summary time: norepinephrine 0\.12 ug\/kg\/min \(charted\s+10:30\), vasopressin 0\.03 U\/min/);
  });

  it('marks entries made late in the timeline and lists them', () => {
    expect(note).toContain('08:10  Blood cultures drawn [LATE ENTRY, made 09:40]');
    expect(note).toContain('08:25  Antibiotic: piperacillin-tazobactam 4.5 g\n');
    // Volumes cover the interval since the previous row (design.md).
    expect(note).toContain('09:05  Crystalloid 1400 mL over 08:25-09:05 (2400 mL since time zero)');
    expect(note).toMatch(/- 08:10 values, entered 09:40 \(1 h 30 min later\): lactate, base excess,/);
  });

  it('leaves out rows after the summary time', () => {
    const early = worksheetNote(ws, { atMs: Date.parse('2026-03-01T08:30:00Z') }); // 09:30 +01:00
    expect(early).not.toContain('10:30  Lactate');
    expect(early).toContain('Left out: 2 rows timed after the summary.');
    checkPasteSafe(early);
  });

  it('says when time zero is not set', () => {
    const none = worksheetNote({ ...ws, timeZero: undefined }, { atMs });
    expect(none).toContain('Time zero: not set.');
    checkPasteSafe(none);
  });
});

describe('golden note of the demo worksheet', () => {
  it('matches tests/export/golden/demo-note.txt', () => {
    const ws = demo();
    const note = worksheetNote(ws, { atMs: DEMO_NOW });
    checkPasteSafe(note);
    if (process.env['UPDATE_GOLDEN'] === '1' || !existsSync(GOLDEN)) {
      // Written only on request; a missing golden file fails the test below.
      if (process.env['UPDATE_GOLDEN'] === '1') writeFileSync(GOLDEN, note);
    }
    expect(existsSync(GOLDEN)).toBe(true);
    expect(note).toBe(readFileSync(GOLDEN, 'utf8'));
  });

  it('agrees with the goal engine on the demo statuses', () => {
    const ws = demo();
    const goals = evaluate(ws, worksheetSetIds(ws), DEMO_NOW);
    const note = worksheetNote(ws, { atMs: DEMO_NOW });
    const counts = { met: 0, pending: 0, missed: 0, 'not-applicable': 0, 'no-data': 0 };
    for (const g of goals) counts[g.status] += 1;
    const word = (w: string) => (note.match(new RegExp(`^${w} {1,}\\S`, 'gm')) ?? []).length;
    expect(word('MET')).toBe(counts.met);
    expect(word('PENDING')).toBe(counts.pending);
    expect(word('MISSED')).toBe(counts.missed);
    expect(word('N/A')).toBe(counts['not-applicable']);
    expect(word('NO DATA')).toBe(counts['no-data']);
  });
});
