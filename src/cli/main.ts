/**
 * The `tidemark` command line (design.md, "Exports and the command line"):
 *
 *   tidemark status FILE [--at TIME] [--sets ids] [--json]
 *   tidemark note FILE | csv FILE | fhir FILE
 *   tidemark review FOLDER [--json]
 *
 * FILE is a JSON backup or a CSV (see csv-read.ts). Exit codes: 0 done; 2 bad input, with ONE line
 * on stderr naming the file, the row (line) and the column; 1 unexpected failure.
 *
 * Decisions:
 * - A backup holding several worksheets needs `--label` (label or id) for status, note, csv and
 *   fhir: the `--json` contract is one object for one worksheet, and a script should not get a
 *   different shape depending on what a file happens to hold. `review` reads every worksheet.
 * - Without a time zero (no `--time-zero` for a CSV, none stored in a backup) the suggested
 *   severe sepsis presentation time (SEP-1 criteria, src/goals suggestTimeZero) is used and one
 *   line on stderr says so; when none can be suggested, goals report no-data and stderr says why.
 * - `--at` defaults to the device clock (the one place the command line reads it).
 * - In `review`, a file that cannot be read stops the review (exit 2): a quality review must not
 *   silently drop cases.
 *
 * Node only (file system); the work is done by the pure core.
 */
import { readdirSync, readFileSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { worksheetToCsv } from '../export/csv.js';
import { readCsvTime } from '../export/csv-read.js';
import { worksheetToFhir } from '../export/fhir.js';
import { NOTE_CAUTION, toAscii, worksheetNote } from '../export/note.js';
import {
  CUSTOM_SET_ID,
  defaultRegistry,
  evaluate,
  statusReport,
  suggestTimeZero,
  worksheetSetIds,
  type GoalStatus,
} from '../goals/index.js';
import { systemClock } from '../sheet/clock.js';
import type { Worksheet } from '../sheet/model.js';
import { formatDateTime, formatDuration, formatIsoWithOffset, formatOffset } from '../sheet/time.js';
import { HELP_TEXT, parseCliArgs, type CliOptions } from './args.js';
import { flagFacts, loadWorksheets, pickWorksheet, problemLine, type CliProblem } from './load.js';
import { reviewGoals, reviewTable } from './review.js';

/** What the command line touches outside the core; replaced in tests. */
export interface CliIo {
  stdout(text: string): void;
  stderr(text: string): void;
  readText(path: string): string;
  /** Names of the entries of a folder; throws when it is not one. */
  listFolder(path: string): string[];
  isFolder(path: string): boolean;
  nowMs(): number;
}

export const nodeIo: CliIo = {
  stdout: (t) => {
    process.stdout.write(t);
  },
  stderr: (t) => {
    process.stderr.write(t);
  },
  readText: (p) => readFileSync(p, 'utf8'),
  listFolder: (p) => readdirSync(p),
  isFolder: (p) => {
    try {
      return statSync(p).isDirectory();
    } catch {
      return false;
    }
  },
  nowMs: () => systemClock.now(),
};

export const EXIT_OK = 0;
export const EXIT_FAILURE = 1;
export const EXIT_BAD_INPUT = 2;

class BadInput extends Error {
  constructor(readonly problem: CliProblem) {
    super(problemLine(problem));
  }
}

function readFile(io: CliIo, path: string): string {
  try {
    return io.readText(path);
  } catch (e) {
    const code = (e as { code?: string }).code;
    const why =
      code === 'ENOENT'
        ? 'no such file'
        : code === 'EISDIR'
          ? 'is a folder, not a file'
          : code === 'EACCES'
            ? 'permission denied'
            : e instanceof Error
              ? e.message
              : String(e);
    throw new BadInput({ file: path, message: `cannot read: ${why}` });
  }
}

function atOf(o: CliOptions, io: CliIo): number {
  if (o.at === undefined) return io.nowMs();
  const t = readCsvTime(o.at);
  if (!t.ok) throw new BadInput({ file: '--at', message: t.error });
  return Date.parse(t.time);
}

function checkSets(o: CliOptions): void {
  for (const id of o.sets ?? []) {
    if (id !== CUSTOM_SET_ID && !defaultRegistry.has(id)) {
      throw new BadInput({
        file: '--sets',
        message: `unknown goal set "${id}"; known sets: ${[...defaultRegistry.ids(), CUSTOM_SET_ID].join(', ')}`,
      });
    }
  }
}

function setIdsOf(o: CliOptions, ws: Worksheet): string[] {
  checkSets(o);
  return o.sets ? [...o.sets] : worksheetSetIds(ws);
}

/**
 * Gives the worksheet the suggested time zero when it has none. Returns the worksheet to use and
 * the one-line remark for stderr (and the note), if any.
 */
export function withTimeZero(ws: Worksheet, atMs: number): { worksheet: Worksheet; remark?: string } {
  if (ws.timeZero) return { worksheet: ws };
  const s = suggestTimeZero(ws, atMs);
  const pick = s.severeSepsis;
  if (!pick) {
    const why = s.notes[0] ?? 'no criteria found';
    return { worksheet: ws, remark: `No time zero given and none could be suggested (${why}); goals cannot be judged. Give --time-zero.` };
  }
  const worksheet: Worksheet = {
    ...ws,
    timeZero: { time: pick.time, offset: pick.offset, basis: pick.basis },
  };
  return {
    worksheet,
    remark: `No time zero given: using the suggested time zero ${formatIsoWithOffset(pick.time, pick.offset)} (${pick.explanation.replace(/\.$/, '')}). Give --time-zero to choose it yourself.`,
  };
}

function oneWorksheet(io: CliIo, path: string, o: CliOptions): { ws: Worksheet; atMs: number; remark?: string; notes: string[] } {
  const facts = flagFacts(o);
  if (!facts.ok) throw new BadInput(facts.problem);
  const atMs = atOf(o, io);
  const text = readFile(io, path);
  const loaded = loadWorksheets(path, text, facts.facts, io.nowMs());
  if (!loaded.ok) throw new BadInput(loaded.problem);
  const picked = pickWorksheet(path, loaded.worksheets, loaded.kind === 'backup' ? o.label : undefined);
  if (!picked.ok) throw new BadInput(picked.problem);
  const tz = withTimeZero(picked.worksheet, atMs);
  const out: { ws: Worksheet; atMs: number; remark?: string; notes: string[] } = { ws: tz.worksheet, atMs, notes: loaded.notes };
  if (tz.remark) out.remark = tz.remark;
  return out;
}

function localText(ms: number, offset: number): string {
  return `${formatDateTime(new Date(ms).toISOString(), offset)} ${formatOffset(offset)}`;
}

/** Human-readable status (ASCII, for a terminal). */
export function statusText(ws: Worksheet, goals: readonly GoalStatus[], atMs: number): string {
  const off = ws.displayOffset;
  const t0 = ws.timeZero ? Date.parse(ws.timeZero.time) : undefined;
  const hhmm = (iso: string): string => {
    const full = formatDateTime(iso, off);
    const day = t0 !== undefined ? formatDateTime(new Date(t0).toISOString(), off).slice(0, 10) : '';
    return full.slice(0, 10) === day ? full.slice(11) : full;
  };
  const dur = (min: number): string => toAscii(formatDuration(Math.round(min * 60_000)));
  const lines: string[] = [];
  lines.push(`Worksheet: ${ws.label}${ws.demo ? ' (invented demo scenario)' : ''}`);
  if (ws.timeZero && t0 !== undefined) {
    lines.push(`Time zero: ${localText(t0, off)} (basis: ${ws.timeZero.basis})`);
    lines.push(`At:        ${localText(atMs, off)}, ${dur((atMs - t0) / 60_000)} ${atMs >= t0 ? 'after' : 'before'} time zero`);
  } else {
    lines.push('Time zero: not set');
    lines.push(`At:        ${localText(atMs, off)}`);
  }
  lines.push('');
  const idWidth = Math.max(4, ...goals.map((g) => g.id.length));
  for (const g of goals) {
    let detail = '';
    if (g.status === 'met') {
      detail = g.target
        ? g.target.latestValue !== null
          ? `latest ${g.target.latestValue} ${g.target.unit}`.trim()
          : ''
        : g.metAt
          ? `at ${hhmm(g.metAt)} (${dur(g.minutesFromTimeZero ?? 0)} from time zero)`
          : '';
    } else if (g.status === 'pending') {
      detail = g.deadline ? `due ${hhmm(g.deadline)}${g.minutesLeft !== null ? ` (${dur(g.minutesLeft)} left)` : ''}` : 'not yet met';
    } else if (g.status === 'missed') {
      detail =
        g.late && g.metAt
          ? `done late at ${hhmm(g.metAt)}, due ${g.deadline ? hhmm(g.deadline) : '-'}`
          : g.deadline
            ? `due ${hhmm(g.deadline)}${g.minutesOverdue !== null ? `, ${dur(g.minutesOverdue)} overdue` : ''}`
            : '';
    }
    lines.push(`${g.id.padEnd(idWidth)}  ${g.status.padEnd(14)}  ${toAscii(detail)}`.trimEnd());
  }
  lines.push('');
  lines.push(NOTE_CAUTION);
  return lines.join('\n') + '\n';
}

const REVIEW_EXT = /\.(json|csv)$/i;

function review(io: CliIo, folder: string, o: CliOptions): number {
  if (!io.isFolder(folder)) throw new BadInput({ file: folder, message: 'is not a folder' });
  const facts = flagFacts(o);
  if (!facts.ok) throw new BadInput(facts.problem);
  const atMs = atOf(o, io);
  const names = io
    .listFolder(folder)
    .filter((n) => REVIEW_EXT.test(n))
    .sort();
  if (names.length === 0) throw new BadInput({ file: folder, message: 'holds no .json or .csv files' });
  const perWorksheet: GoalStatus[][] = [];
  // Remarks wait until every file has been read: bad input must give exactly one line.
  const remarks: string[] = [];
  for (const name of names) {
    const path = join(folder, name);
    const loaded = loadWorksheets(path, readFile(io, path), facts.facts, io.nowMs());
    if (!loaded.ok) throw new BadInput(loaded.problem);
    for (const w of loaded.worksheets) {
      const tz = withTimeZero(w, atMs);
      if (tz.remark) remarks.push(problemLine({ file: path, where: w.label, message: tz.remark }));
      perWorksheet.push(evaluate(tz.worksheet, setIdsOf(o, tz.worksheet), atMs));
    }
  }
  for (const line of remarks) io.stderr(`${line}\n`);
  const report = reviewGoals(perWorksheet, new Date(atMs).toISOString());
  io.stdout(o.json ? `${JSON.stringify(report, null, 2)}\n` : reviewTable(report, folder));
  return EXIT_OK;
}

/** Runs the command line; returns the exit code. Never throws. */
export function run(argv: readonly string[], io: CliIo = nodeIo): number {
  try {
    const args = parseCliArgs(argv);
    if (args.kind === 'help') {
      io.stdout(HELP_TEXT);
      return EXIT_OK;
    }
    if (args.kind === 'version') {
      io.stdout('tidemark 0.1.0\n');
      return EXIT_OK;
    }
    if (args.kind === 'usage-error') {
      io.stderr(`tidemark: ${args.message} (see tidemark --help)\n`);
      return EXIT_BAD_INPUT;
    }
    const { command, path, options: o } = args;
    // Every option is checked before anything is written, so bad input gives exactly one line.
    checkSets(o);
    if (command === 'review') return review(io, path, o);
    const { ws, atMs, remark, notes } = oneWorksheet(io, path, o);
    for (const n of notes) io.stderr(`tidemark: ${path}: ${n.replace(/\s+/g, ' ')}\n`);
    if (remark) io.stderr(`${problemLine({ file: path, message: remark })}\n`);
    switch (command) {
      case 'status': {
        const setIds = setIdsOf(o, ws);
        if (o.json) io.stdout(`${JSON.stringify(statusReport(ws, setIds, atMs), null, 2)}\n`);
        else io.stdout(statusText(ws, evaluate(ws, setIds, atMs), atMs));
        return EXIT_OK;
      }
      case 'note': {
        const setIds = setIdsOf(o, ws);
        const noteOptions: Parameters<typeof worksheetNote>[1] = { atMs, setIds };
        if (remark) noteOptions.timeZeroRemark = remark;
        io.stdout(worksheetNote(ws, noteOptions));
        return EXIT_OK;
      }
      case 'csv':
        io.stdout(worksheetToCsv(ws));
        return EXIT_OK;
      case 'fhir':
        io.stdout(`${JSON.stringify(worksheetToFhir(ws, { atMs }), null, 2)}\n`);
        return EXIT_OK;
    }
  } catch (e) {
    if (e instanceof BadInput) {
      io.stderr(`${e.message}\n`);
      return EXIT_BAD_INPUT;
    }
    const msg = e instanceof Error ? e.message : String(e);
    io.stderr(`tidemark: unexpected failure: ${msg.replace(/\s+/g, ' ')}\n`);
    if (process.env['TIDEMARK_DEBUG'] && e instanceof Error && e.stack) io.stderr(`${e.stack}\n`);
    return EXIT_FAILURE;
  }
}
