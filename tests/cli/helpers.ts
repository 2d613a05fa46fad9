/**
 * Helpers for command-line tests: run the real program as a child process, or run() in-process
 * with a fake file system and clock; build invented worksheets and backups.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { run, type CliIo } from '../../src/cli/main.js';
import { FixedClock } from '../../src/sheet/clock.js';
import type { Worksheet } from '../../src/sheet/model.js';
import { addRow, createWorksheet, setFacts } from '../../src/sheet/worksheet.js';
import { backupToJson, createBackup } from '../../src/storage/backup.js';
import { at, cells } from '../export/fixture.js';

export const REPO = resolve(import.meta.dirname, '../..');
export const BIN = join(REPO, 'bin', 'tidemark.mjs');
export const FIXTURES = join(REPO, 'tests', 'cli', 'fixtures');

export interface Ran {
  code: number;
  stdout: string;
  stderr: string;
}

/** Runs `node bin/tidemark.mjs ...args` as a child process. */
export function spawnCli(args: readonly string[], cwd = REPO): Ran {
  const r = spawnSync(process.execPath, [BIN, ...args], {
    cwd,
    encoding: 'utf8',
    timeout: 180_000,
    env: { ...process.env, NODE_NO_WARNINGS: '1' },
  });
  if (r.error) throw r.error;
  return { code: r.status ?? -1, stdout: r.stdout, stderr: r.stderr };
}

/** Runs the command line in-process with these files (path -> text) and a fixed clock. */
export function runCli(args: readonly string[], files: Record<string, string | string[]> = {}, nowIso = '2026-03-02T00:00:00Z'): Ran {
  let stdout = '';
  let stderr = '';
  const io: CliIo = {
    stdout: (t) => {
      stdout += t;
    },
    stderr: (t) => {
      stderr += t;
    },
    readText: (p) => {
      const f = files[p];
      if (typeof f === 'string') return f;
      const e = new Error(`ENOENT: ${p}`) as Error & { code: string };
      e.code = Array.isArray(f) ? 'EISDIR' : 'ENOENT';
      throw e;
    },
    listFolder: (p) => {
      const f = files[p];
      if (!Array.isArray(f)) throw new Error(`not a folder: ${p}`);
      return f;
    },
    isFolder: (p) => Array.isArray(files[p]),
    nowMs: () => Date.parse(nowIso),
  };
  const code = run(args, io);
  return { code, stdout, stderr };
}

export function tempDir(): string {
  return mkdtempSync(join(tmpdir(), 'tidemark-cli-'));
}

/**
 * An invented worksheet (fictional): time zero 08:00 +01:00 at triage, lactate 4.6 at 08:05,
 * cultures at `culturesMin` and the antibiotic at `antibioticMin` minutes after time zero.
 */
export function caseWorksheet(id: string, label: string, antibioticMin: number, culturesMin = antibioticMin - 5): Worksheet {
  let n = 0;
  const ctx = { clock: new FixedClock(Date.parse('2026-03-01T07:00:00Z')), newId: () => `${id}-${++n}` };
  let ws = createWorksheet(ctx, { label, displayOffset: 60, weightKg: 75 });
  ws = { ...ws, id };
  ws = setFacts(ctx, ws, { timeZero: { ...at('2026-03-01T08:00+01:00'), basis: 'triage' } }).worksheet;
  const t0 = Date.parse('2026-03-01T07:00:00Z');
  const put = (min: number, typed: Record<string, string>): void => {
    const ms = t0 + min * 60_000;
    ctx.clock.set(ms + 2 * 60_000);
    ws = addRow(ctx, ws, new Date(ms).toISOString(), 60, cells(typed)).worksheet;
  };
  put(0, { sbp: '86', dbp: '48', hr: '110', infection_suspected: 'yes' });
  put(5, { lactate: '4.6' });
  put(culturesMin, { cultures_drawn: 'yes' });
  put(antibioticMin, { antibiotic: 'meropenem 1 g' });
  return ws;
}

export function writeBackup(dir: string, name: string, worksheets: Worksheet[]): string {
  const path = join(dir, name);
  writeFileSync(path, backupToJson(createBackup(worksheets, new FixedClock(Date.parse('2026-03-01T20:00:00Z')))));
  return path;
}
