/**
 * Turns a file's text and the command-line facts into worksheets. Pure (the caller reads the
 * file); every problem comes back as one CliProblem naming the file, the place and what is wrong.
 */
import { readWorksheetCsv, readCsvTime, worksheetFromCsvRows, type CsvFacts } from '../export/csv-read.js';
import { Sex, TimeZeroBasis, type TimeZero, type Worksheet } from '../sheet/model.js';
import { parseBackup } from '../storage/backup.js';
import type { CliOptions } from './args.js';

export interface CliProblem {
  /** The file (or folder, or option) the problem is in. */
  file: string;
  /** Where in it: "line 3, column map", "worksheets[0].rows[2].time", "--weight-kg". */
  where?: string;
  message: string;
}

/** The problem as the one line the command line prints. */
export function problemLine(p: CliProblem): string {
  const text = `tidemark: ${p.file}${p.where ? `: ${p.where}` : ''}: ${p.message}`;
  return text
    .replace(/[\r\n\t]+/g, ' ')
    .replace(/\s{2,}/g, ' ')
    .trim();
}

export type FileKind = 'backup' | 'csv';

/** By extension; otherwise a file whose first non-blank character is `{` is a backup. */
export function fileKind(path: string, text: string): FileKind {
  const lower = path.toLowerCase();
  if (lower.endsWith('.json')) return 'backup';
  if (lower.endsWith('.csv')) return 'csv';
  return text
    .replace(/^\uFEFF/, '')
    .trimStart()
    .startsWith('{')
    ? 'backup'
    : 'csv';
}

/** Facts given as flags, checked. */
export interface FlagFacts {
  weightKg?: number;
  heightCm?: number;
  sex?: Sex;
  timeZero?: TimeZero;
  label?: string;
}

function numberFlag(name: string, text: string): number | CliProblem {
  const t = text.trim();
  const n = /^\d+(?:[.,]\d+)?$/.test(t) ? Number(t.replace(',', '.')) : NaN;
  if (!Number.isFinite(n)) return { file: `--${name}`, message: `"${text}" is not a number` };
  return n;
}

/** Checks the fact flags; the worksheet schema checks the ranges later. */
export function flagFacts(o: CliOptions): { ok: true; facts: FlagFacts } | { ok: false; problem: CliProblem } {
  const facts: FlagFacts = {};
  if (o.weightKg !== undefined) {
    const n = numberFlag('weight-kg', o.weightKg);
    if (typeof n !== 'number') return { ok: false, problem: n };
    facts.weightKg = n;
  }
  if (o.heightCm !== undefined) {
    const n = numberFlag('height-cm', o.heightCm);
    if (typeof n !== 'number') return { ok: false, problem: n };
    facts.heightCm = n;
  }
  if (o.sex !== undefined) {
    const s = Sex.safeParse(o.sex.trim().toLowerCase());
    if (!s.success) return { ok: false, problem: { file: '--sex', message: `"${o.sex}" is not one of: female, male` } };
    facts.sex = s.data;
  }
  let basis: TimeZeroBasis = 'other';
  if (o.timeZeroBasis !== undefined) {
    const b = TimeZeroBasis.safeParse(o.timeZeroBasis.trim().toLowerCase());
    if (!b.success)
      return {
        ok: false,
        problem: { file: '--time-zero-basis', message: `"${o.timeZeroBasis}" is not one of: ${TimeZeroBasis.options.join(', ')}` },
      };
    basis = b.data;
  }
  if (o.timeZero !== undefined) {
    const t = readCsvTime(o.timeZero);
    if (!t.ok) return { ok: false, problem: { file: '--time-zero', message: t.error } };
    facts.timeZero =
      basis === 'other'
        ? { time: t.time, offset: t.offset, basis, reason: 'given with --time-zero on the command line' }
        : { time: t.time, offset: t.offset, basis };
  }
  if (o.label !== undefined) {
    if (o.label.trim() === '' || o.label.length > 60)
      return { ok: false, problem: { file: '--label', message: 'give a bed or case code of 1 to 60 characters' } };
    facts.label = o.label.trim();
  }
  return { ok: true, facts };
}

const FLAG_OF: Record<string, string> = {
  weightKg: '--weight-kg',
  heightCm: '--height-cm',
  sex: '--sex',
  timeZero: '--time-zero',
  label: '--label',
};

function baseName(path: string): string {
  const name = path.split(/[\\/]/).pop() ?? path;
  return name.replace(/\.[^.]*$/, '') || name;
}

export type LoadResult = { ok: true; kind: FileKind; worksheets: Worksheet[]; notes: string[] } | { ok: false; problem: CliProblem };

/**
 * Reads a CSV or a JSON backup. For a CSV the facts come from the flags (label defaults to the
 * file name); for a backup, fact flags other than --label override the stored facts for this
 * run only, and each override is noted.
 */
export function loadWorksheets(path: string, text: string, facts: FlagFacts, nowMs: number): LoadResult {
  const kind = fileKind(path, text);
  if (kind === 'csv') {
    const read = readWorksheetCsv(text);
    if (!read.ok) {
      const e = read.errors[0]!;
      return {
        ok: false,
        problem: { file: path, where: `line ${e.line}${e.column !== undefined ? `, column ${e.column}` : ''}`, message: e.message },
      };
    }
    const label = (facts.label ?? baseName(path)).slice(0, 60);
    const csvFacts: CsvFacts = {
      label,
      id: `csv-${baseName(path)
        .replace(/[^A-Za-z0-9_-]+/g, '-')
        .slice(0, 50)}`,
    };
    if (facts.weightKg !== undefined) csvFacts.weightKg = facts.weightKg;
    if (facts.heightCm !== undefined) csvFacts.heightCm = facts.heightCm;
    if (facts.sex !== undefined) csvFacts.sex = facts.sex;
    if (facts.timeZero !== undefined) csvFacts.timeZero = facts.timeZero;
    const built = worksheetFromCsvRows(read, csvFacts, nowMs, path);
    if (!built.ok) {
      const e = built.errors[0]!;
      const flag = e.column ? FLAG_OF[e.column] : undefined;
      return { ok: false, problem: flag ? { file: flag, message: e.message.replace(/^[^:]*: /, '') } : { file: path, message: e.message } };
    }
    return { ok: true, kind, worksheets: [built.worksheet], notes: [] };
  }
  const r = parseBackup(text);
  if (!r.ok) {
    const first = r.problems[0] ?? 'not a Tidemark backup';
    const m = /^([A-Za-z_$][\w$]*(?:\[\d+\]|\.[\w$]+)*): (.*)$/s.exec(first);
    return { ok: false, problem: m ? { file: path, where: m[1]!, message: m[2]! } : { file: path, message: first } };
  }
  const notes = [...r.notes];
  const worksheets = r.doc.worksheets.map((ws) => {
    const w: Worksheet = { ...ws };
    if (facts.weightKg !== undefined) w.weightKg = facts.weightKg;
    if (facts.heightCm !== undefined) w.heightCm = facts.heightCm;
    if (facts.sex !== undefined) w.sex = facts.sex;
    if (facts.timeZero !== undefined) w.timeZero = facts.timeZero;
    return w;
  });
  const overridden = (['weightKg', 'heightCm', 'sex', 'timeZero'] as const).filter((k) => facts[k] !== undefined).map((k) => FLAG_OF[k]);
  if (overridden.length) notes.push(`${overridden.join(', ')} override the facts stored in the backup for this run only.`);
  return { ok: true, kind, worksheets, notes };
}

/** Picks the one worksheet a command works on: by --label (label or id), or the only one. */
export function pickWorksheet(
  path: string,
  worksheets: readonly Worksheet[],
  label: string | undefined,
): { ok: true; worksheet: Worksheet } | { ok: false; problem: CliProblem } {
  if (label !== undefined) {
    const found = worksheets.filter((w) => w.label === label || w.id === label);
    if (found.length === 1) return { ok: true, worksheet: found[0]! };
    const names = worksheets
      .map((w) => `"${w.label}"`)
      .slice(0, 10)
      .join(', ');
    if (found.length === 0)
      return {
        ok: false,
        problem: { file: path, where: '--label', message: `no worksheet labelled "${label}"; the file holds ${names || 'none'}` },
      };
    return {
      ok: false,
      problem: {
        file: path,
        where: '--label',
        message: `${found.length} worksheets are labelled "${label}"; use the worksheet id instead`,
      },
    };
  }
  if (worksheets.length === 1) return { ok: true, worksheet: worksheets[0]! };
  if (worksheets.length === 0) return { ok: false, problem: { file: path, message: 'the backup holds no worksheet' } };
  const names = worksheets
    .map((w) => `"${w.label}"`)
    .slice(0, 10)
    .join(', ');
  return {
    ok: false,
    problem: {
      file: path,
      message: `the backup holds ${worksheets.length} worksheets (${names}${worksheets.length > 10 ? ', ...' : ''}); choose one with --label`,
    },
  };
}
