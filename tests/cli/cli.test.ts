// The `tidemark` command line (design.md, "Exports and the command line"). Child-process tests
// run the real program (node bin/tidemark.mjs, tsx); in-process tests run the same `run` with a
// fake file system for the many error paths. Expected goal times are worked by hand from the
// published windows: SEP-1 antibiotics, initial lactate and cultures within 3 h of time zero
// (reference file §3b); SSC hour-1 bundle antibiotics within 1 h (reference file §2).
import { copyFileSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { DEMO_LABEL, demoWorksheet } from '../../src/app/demo-scenario.js';
import { readWorksheetCsv, worksheetFromCsvRows } from '../../src/export/csv-read.js';
import { statusReport, worksheetSetIds } from '../../src/goals/index.js';
import { at, fixtureWorksheet } from '../export/fixture.js';
import { FIXTURES, caseWorksheet, runCli, spawnCli, tempDir, writeBackup } from './helpers.js';

const SPAWN_TIMEOUT = 240_000;
const AT = '2026-03-01T18:00+01:00';
const AT_MS = Date.parse('2026-03-01T17:00:00Z');
const BED12 = join(FIXTURES, 'bed12.csv');
const BED12_TEXT = readFileSync(BED12, 'utf8');

type Report = {
  timeZero: string | null;
  at: string;
  goals: { id: string; status: string; metAt: string | null; minutesFromTimeZero: number | null; deadline: string | null }[];
};
const goal = (r: Report, id: string) => r.goals.find((g) => g.id === id);
/** The demo at a fixed moment: time zero 09:00 +01:00, 130 min before 11:10 +01:00. */
const DEMO_NOW = Date.parse('2026-03-01T10:10:00Z');
function demo() {
  let n = 0;
  return demoWorksheet(DEMO_NOW, () => `demo-${++n}`, 60);
}

let dir = '';
let backupPath = '';
beforeAll(() => {
  dir = tempDir();
  backupPath = writeBackup(dir, 'notebook.json', [fixtureWorksheet(), demo()]);
});

describe('child process: status --json', () => {
  it('reads the CSV fixture and gives the --json contract with hand-checked times', { timeout: SPAWN_TIMEOUT }, () => {
    const r = spawnCli([
      'status',
      BED12,
      '--weight-kg',
      '70',
      '--time-zero',
      '2026-03-01T14:00+01:00',
      '--time-zero-basis',
      'triage',
      '--at',
      AT,
      '--json',
    ]);
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
    const report = JSON.parse(r.stdout) as Report;
    // The contract: exactly these keys.
    expect(Object.keys(report)).toEqual(['timeZero', 'at', 'goals']);
    for (const g of report.goals) expect(Object.keys(g)).toEqual(['id', 'status', 'metAt', 'minutesFromTimeZero', 'deadline']);
    expect(report.timeZero).toBe('2026-03-01T13:00:00.000Z');
    expect(report.at).toBe('2026-03-01T17:00:00.000Z');
    // Antibiotic charted 14:40, time zero 14:00: 40 min; SEP-1 deadline 3 h -> 17:00 (+01:00).
    expect(goal(report, 'sep1.antibiotics')).toEqual({
      id: 'sep1.antibiotics',
      status: 'met',
      metAt: '2026-03-01T13:40:00.000Z',
      minutesFromTimeZero: 40,
      deadline: '2026-03-01T16:00:00.000Z',
    });
    // Lactate "45 mg/dL" at 14:15 (read with the unit): 15 min.
    expect(goal(report, 'sep1.lactate')).toMatchObject({ status: 'met', minutesFromTimeZero: 15 });
    expect(goal(report, 'sep1.cultures-before-antibiotics')).toMatchObject({ status: 'met', minutesFromTimeZero: 15 });
    // Hour-1 bundle: antibiotic within 1 h of time zero -> 15:00 (+01:00).
    expect(goal(report, 'ssc-hour1.antibiotics')).toMatchObject({
      status: 'met',
      minutesFromTimeZero: 40,
      deadline: '2026-03-01T14:00:00.000Z',
    });
    // 30 mL/kg of 70 kg = 2100 mL (reference file §16): 1000 mL at 14:40 + 1100 mL at 15:30.
    expect(goal(report, 'sep1.fluids-30')).toMatchObject({ status: 'met', minutesFromTimeZero: 90 });

    // The same as the goal engine on the same worksheet, in-process.
    const read = readWorksheetCsv(BED12_TEXT);
    if (!read.ok) throw new Error('fixture');
    const built = worksheetFromCsvRows(
      read,
      { label: 'bed12', weightKg: 70, timeZero: { ...at('2026-03-01T14:00+01:00'), basis: 'triage' } },
      0,
    );
    if (!built.ok) throw new Error('fixture');
    expect(report).toEqual(statusReport(built.worksheet, worksheetSetIds(built.worksheet), AT_MS));
  });

  it('reads a JSON backup (the demo worksheet, picked by --label) and gives the goal engine statuses', { timeout: SPAWN_TIMEOUT }, () => {
    const r = spawnCli(['status', backupPath, '--label', DEMO_LABEL, '--at', '2026-03-01T11:10+01:00', '--json']);
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
    const report = JSON.parse(r.stdout) as Report;
    const ws = demo();
    // Same statuses as the goal engine, for every goal of the demo's sets.
    expect(report).toEqual(statusReport(ws, worksheetSetIds(ws), DEMO_NOW));
    expect(report.goals.length).toBeGreaterThan(10);
    // Demo course (src/app/demo-scenario.ts): antibiotic 75 min after time zero: within SEP-1's
    // 3 h (reference file §3b) but past the hour-1 bundle's 1 h (reference file §2).
    expect(goal(report, 'sep1.antibiotics')).toMatchObject({ status: 'met', minutesFromTimeZero: 75 });
    expect(goal(report, 'ssc-hour1.antibiotics')).toMatchObject({ status: 'missed', minutesFromTimeZero: 75 });
  });
});

describe('child process: bad input', () => {
  it('exits 2 with one line naming the file, the line and the column', { timeout: SPAWN_TIMEOUT }, () => {
    const bad = join(dir, 'bad.csv');
    writeFileSync(bad, 'time,map,lactate\r\n2026-03-01T08:00+01:00,65,2.1\r\n2026-03-01T08:30+01:00,900,\r\n');
    const r = spawnCli(['status', bad, '--json']);
    expect(r.code).toBe(2);
    expect(r.stdout).toBe('');
    const lines = r.stderr.split('\n').filter((l) => l.length > 0);
    expect(lines).toHaveLength(1);
    expect(lines[0]).toContain(bad);
    expect(lines[0]).toContain('line 3');
    expect(lines[0]).toContain('column map');
    expect(lines[0]).toMatch(/outside the accepted range/);
  });
});

describe('child process: review', () => {
  it('reports each goal across the worksheets of a folder', { timeout: SPAWN_TIMEOUT }, () => {
    const folder = join(dir, 'review');
    mkdirSync(folder);
    // Antibiotic at 30 and 90 min (one backup holding two worksheets), 240 min (another backup),
    // and the CSV fixture (40 min after its suggested time zero, 14:00).
    writeBackup(folder, 'a.json', [caseWorksheet('case-a', 'Case A (fictional)', 30), caseWorksheet('case-b', 'Case B (fictional)', 90)]);
    writeBackup(folder, 'b.json', [caseWorksheet('case-c', 'Case C (fictional)', 240)]);
    copyFileSync(BED12, join(folder, 'bed12.csv'));
    writeFileSync(join(folder, 'readme.txt'), 'not a worksheet');
    const r = spawnCli(['review', folder, '--weight-kg', '70', '--at', '2026-03-02T12:00+01:00', '--json']);
    expect(r.code).toBe(0);
    // The CSV has no time zero: the suggestion is used and said on stderr (one line).
    expect(r.stderr.trim().split('\n')).toHaveLength(1);
    expect(r.stderr).toMatch(/bed12\.csv.*suggested time zero 2026-03-01T14:00:00\+01:00/);
    const report = JSON.parse(r.stdout) as {
      worksheets: number;
      goals: {
        id: string;
        worksheets: number;
        applicable: number;
        met: number;
        missed: number;
        pending: number;
        noData: number;
        notApplicable: number;
        medianMinutesToMet: number | null;
      }[];
    };
    expect(report.worksheets).toBe(4);
    const sep1 = report.goals.find((g) => g.id === 'sep1.antibiotics');
    // SEP-1 3 h: 30, 90, 40 met; 240 missed. Median of 30, 40, 90 = 40.
    expect(sep1).toMatchObject({ worksheets: 4, applicable: 4, met: 3, missed: 1, pending: 0, medianMinutesToMet: 40 });
    const hour1 = report.goals.find((g) => g.id === 'ssc-hour1.antibiotics');
    // Hour-1: 30 and 40 met; 90 and 240 missed. Median of 30 and 40 = 35.
    expect(hour1).toMatchObject({ worksheets: 4, applicable: 4, met: 2, missed: 2, medianMinutesToMet: 35 });
  });
});

describe('child process: help', () => {
  it('prints the usage and exits 0', { timeout: SPAWN_TIMEOUT }, () => {
    const r = spawnCli(['--help']);
    expect(r.code).toBe(0);
    expect(r.stdout).toContain('tidemark status FILE [--at TIME] [--sets IDS] [--json]');
    expect(r.stdout).toContain('tidemark review FOLDER');
    expect(r.stdout).toMatch(/decision support only/i);
  });
});

describe('in-process: inputs and errors', () => {
  const files = (): Record<string, string | string[]> => ({ 'bed12.csv': BED12_TEXT });

  it('without --time-zero uses the suggested time zero and says so on stderr', () => {
    const r = runCli(['status', 'bed12.csv', '--weight-kg', '70', '--at', AT, '--json'], files());
    expect(r.code).toBe(0);
    expect(r.stderr).toMatch(/^tidemark: bed12\.csv: No time zero given: using the suggested time zero 2026-03-01T14:00:00\+01:00/);
    expect((JSON.parse(r.stdout) as Report).timeZero).toBe('2026-03-01T13:00:00.000Z');
  });

  it('needs --label for a backup with several worksheets, and picks by label', () => {
    const two = readFileSync(writeBackup(dir, 'two.json', [caseWorksheet('x1', 'Bed 1', 30), caseWorksheet('x2', 'Bed 2', 90)]), 'utf8');
    const r = runCli(['status', 'two.json', '--json'], { 'two.json': two });
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/two\.json: the backup holds 2 worksheets \("Bed 1", "Bed 2"\); choose one with --label/);
    const ok = runCli(['status', 'two.json', '--label', 'Bed 2', '--at', '2026-03-01T12:00+01:00', '--json'], { 'two.json': two });
    expect(ok.code).toBe(0);
    expect(goal(JSON.parse(ok.stdout) as Report, 'sep1.antibiotics')).toMatchObject({ minutesFromTimeZero: 90 });
  });

  const oneLineErrors: [string, string[], RegExp][] = [
    ['missing file', ['status', 'nope.csv'], /^tidemark: nope\.csv: cannot read: no such file$/],
    ['unknown command', ['stats', 'bed12.csv'], /unknown command "stats"/],
    ['unknown option', ['status', 'bed12.csv', '--wieght-kg', '70'], /Unknown option '--wieght-kg'/],
    ['bad weight', ['status', 'bed12.csv', '--weight-kg', 'heavy'], /^tidemark: --weight-kg: "heavy" is not a number$/],
    ['weight out of range (1–400 kg)', ['status', 'bed12.csv', '--weight-kg', '4000'], /^tidemark: --weight-kg: /],
    ['bad sex', ['status', 'bed12.csv', '--sex', 'x'], /^tidemark: --sex: "x" is not one of: female, male$/],
    ['time zero without offset', ['status', 'bed12.csv', '--time-zero', '2026-03-01T14:00'], /^tidemark: --time-zero: .*offset/],
    ['bad --at', ['status', 'bed12.csv', '--at', 'soon'], /^tidemark: --at: /],
    ['unknown goal set', ['status', 'bed12.csv', '--sets', 'sep1,sep2'], /^tidemark: --sets: unknown goal set "sep2"/],
    ['option that does not apply', ['csv', 'bed12.csv', '--json'], /--json does not apply to csv/],
    ['review of a file', ['review', 'bed12.csv'], /^tidemark: bed12\.csv: is not a folder$/],
    ['backup that is not JSON', ['status', 'x.json'], /^tidemark: x\.json: The file is not valid JSON/],
  ];
  for (const [name, args, pattern] of oneLineErrors) {
    it(`exits 2 with one line: ${name}`, () => {
      const r = runCli(args, { ...files(), 'x.json': '{"format": "tidemark-backup", ' });
      expect(r.code).toBe(2);
      expect(r.stdout).toBe('');
      const lines = r.stderr.split('\n').filter((l) => l.length > 0);
      expect(lines).toHaveLength(1);
      expect(lines[0]).toMatch(pattern);
    });
  }

  it('names the path of a bad value inside a backup', () => {
    const ws = fixtureWorksheet();
    const text = readFileSync(writeBackup(dir, 'bad.json', [ws]), 'utf8').replace('"2026-03-01T07:10:00.000Z"', '"yesterday"');
    const r = runCli(['status', 'bad.json'], { 'bad.json': text });
    expect(r.code).toBe(2);
    expect(r.stderr.trim().split('\n')).toHaveLength(1);
    expect(r.stderr).toMatch(/^tidemark: bad\.json: worksheets\[0\]\.rows\[1\]\.time: /);
  });

  it('reads a backup of the fixture worksheet with the engine statuses (in-process)', () => {
    const text = readFileSync(writeBackup(dir, 'bed7.json', [fixtureWorksheet()]), 'utf8');
    const r = runCli(['status', 'bed7.json', '--at', '2026-03-01T11:00+01:00', '--json'], { 'bed7.json': text });
    expect(r.code).toBe(0);
    const ws = fixtureWorksheet();
    expect(JSON.parse(r.stdout)).toEqual(statusReport(ws, worksheetSetIds(ws), Date.parse('2026-03-01T10:00:00Z')));
    // Antibiotic at 08:25 after time zero 08:00 (tests/export/fixture.ts): 25 min, within 1 h.
    expect(goal(JSON.parse(r.stdout) as Report, 'ssc-hour1.antibiotics')).toMatchObject({ status: 'met', minutesFromTimeZero: 25 });
  });

  it('status --sets limits the goals to the sets asked for', () => {
    const r = runCli(['status', 'bed12.csv', '--time-zero', '2026-03-01T14:00+01:00', '--sets', 'egdt', '--at', AT, '--json'], files());
    expect(r.code).toBe(0);
    const ids = (JSON.parse(r.stdout) as Report).goals.map((g) => g.id);
    expect(ids.length).toBeGreaterThan(0);
    expect(ids.every((id) => id.startsWith('egdt.'))).toBe(true);
  });

  it('status text names the worksheet, time zero and each goal, with the caution', () => {
    const r = runCli(['status', 'bed12.csv', '--weight-kg', '70', '--time-zero', '2026-03-01T14:00+01:00', '--at', AT], files());
    expect(r.code).toBe(0);
    expect(r.stdout).toContain('Worksheet: bed12');
    expect(r.stdout).toContain('Time zero: 2026-03-01 14:00 +01:00 (basis: other)');
    expect(r.stdout).toMatch(/sep1\.antibiotics\s+met\s+at 14:40 \(40 min from time zero\)/);
    expect(r.stdout).toMatch(/Decision support only/);
  });

  it('csv, fhir and note commands write their exports', () => {
    const csv = runCli(['csv', 'bed12.csv', '--time-zero', '2026-03-01T14:00+01:00'], files());
    expect(csv.code).toBe(0);
    expect(csv.stdout.split('\r\n')[0]).toMatch(/^time,sbp,dbp,map,hr,rr,temp,lactate,/);
    // Rows in time order, whatever the file's order.
    expect(csv.stdout.split('\r\n')[1]).toMatch(/^2026-03-01T14:00:00\+01:00,/);
    const fhir = runCli(['fhir', 'bed12.csv', '--time-zero', '2026-03-01T14:00+01:00', '--at', AT], files());
    expect(fhir.code).toBe(0);
    expect(JSON.parse(fhir.stdout)).toMatchObject({ resourceType: 'Bundle', type: 'collection', timestamp: '2026-03-01T18:00:00+01:00' });
    const note = runCli(['note', 'bed12.csv', '--weight-kg', '70', '--at', AT], files());
    expect(note.code).toBe(0);
    expect(note.stdout).toContain('CAUTION: Decision support only.');
    // The suggested time zero is said in the note too.
    expect(note.stdout).toMatch(/No time zero given: using the suggested time zero/);
  });

  it('review stops with one line when a file in the folder is bad', () => {
    const good = readFileSync(writeBackup(dir, 'good.json', [caseWorksheet('g1', 'Bed 3', 30)]), 'utf8');
    const r = runCli(['review', 'cases'], {
      cases: ['bed12.csv', 'good.json', 'zz.csv'],
      'cases/bed12.csv': BED12_TEXT,
      'cases/good.json': good,
      'cases/zz.csv': 'time,lactate\n2026-03-01T08:00Z,lots\n',
    });
    expect(r.code).toBe(2);
    const lines = r.stderr.split('\n').filter((l) => l.length > 0);
    expect(lines).toEqual([expect.stringMatching(/^tidemark: cases\/zz\.csv: line 2, column lactate: "lots" is not a number/)]);
  });

  it('review prints a table by default', () => {
    const a = readFileSync(writeBackup(dir, 'ra.json', [caseWorksheet('r1', 'Bed 4', 30), caseWorksheet('r2', 'Bed 5', 50)]), 'utf8');
    const r = runCli(['review', 'cases', '--at', '2026-03-01T20:00+01:00'], { cases: ['ra.json'], 'cases/ra.json': a });
    expect(r.code).toBe(0);
    expect(r.stdout).toContain('Review of 2 worksheets in cases');
    // SEP-1 antibiotics at 30 and 50 min: both met, median 40 (hand-worked).
    expect(r.stdout).toMatch(/sep1\.antibiotics\s+2\s+2\s+2\s+0\s+0\s+0\s+0\s+40\n/);
  });
});
