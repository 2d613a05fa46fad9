/**
 * Reads the command line's CSV input (design.md, "Exports and the command line"):
 * - a header line naming measure keys, the first column `time`;
 * - `time` is ISO 8601 with an offset ("2026-03-01T08:15+01:00" or "...Z"); rows in any order;
 * - cells are read with parseCellInput, so the units accepted at entry are accepted here
 *   ("36 mg/dL" in a lactate column); a mark column takes any non-empty cell as a mark;
 * - columns named `derived.<key>` (as written by csv.ts) are computed values and are skipped.
 *
 * Never throws on bad input: every problem comes back as an issue naming the file line (the line
 * where the record starts, 1 = header) and the column (its key).
 *
 * Decisions:
 * - Strict RFC 4180 quoting: a quote inside an unquoted field, or text after a closing quote, is
 *   an error rather than guessed at. Line ends may be CRLF, LF or CR. Blank lines are skipped.
 *   Every record must have as many fields as the header.
 * - A mark cell that reads as a refusal ("no", "n", "0", "false", "none") is an error, not a
 *   mark: design.md says any non-empty cell is a mark, and reading "no" as "cultures drawn"
 *   would put a false event into the record.
 * - A leading single quote added by our own formula guard (csv.ts) is removed on reading; in a
 *   number column any one leading quote is removed (a spreadsheet's way of keeping text).
 * - Times must carry an offset: a bare local time cannot be placed on the time line.
 *
 * Pure: no DOM, no clock (the caller gives `nowMs` for the worksheet's created/updated stamps).
 */
import { DEFAULT_SET_IDS } from '../goals/registry.js';
import { DEFAULT_COLUMNS, MEASURES } from '../sheet/measures.js';
import { Worksheet, type Cell, type Row, type Sex, type TimeZero } from '../sheet/model.js';
import { parseCellInput } from '../sheet/parse.js';
import { parseTimeInput } from '../sheet/time.js';
import { DERIVED_PREFIX, unguardFormulaLead } from './csv.js';

export interface CsvIssue {
  /** File line where the record starts (1 = header line). */
  line: number;
  /** The column's key (header name), when the problem is in one field. */
  column?: string;
  message: string;
}

export interface CsvRecord {
  line: number;
  fields: string[];
}

export type CsvParseResult = { ok: true; records: CsvRecord[] } | { ok: false; errors: CsvIssue[] };

/** Largest input accepted, in characters (about 64 MB): a worksheet holds at most 100 000 rows. */
export const MAX_CSV_CHARS = 64 * 1024 * 1024;
/** At most this many data rows (the worksheet model's limit). */
export const MAX_CSV_ROWS = 100_000;
/** At most this many issues are reported for one file. */
export const MAX_ISSUES = 20;

/**
 * Splits RFC 4180 text into records of fields. Strips a UTF-8 byte-order mark. Blank lines are
 * dropped. Never throws.
 */
export function parseCsvRecords(text: string): CsvParseResult {
  if (typeof text !== 'string') return { ok: false, errors: [{ line: 1, message: 'the input is not text' }] };
  if (text.length > MAX_CSV_CHARS)
    return { ok: false, errors: [{ line: 1, message: `the file is larger than ${MAX_CSV_CHARS} characters` }] };
  const s = text.charCodeAt(0) === 0xfeff ? text.slice(1) : text;
  const records: CsvRecord[] = [];
  let line = 1;
  let recordLine = 1;
  let fields: string[] = [];
  let field = '';
  let i = 0;
  const n = s.length;
  let atFieldStart = true;
  const endRecord = (): void => {
    fields.push(field);
    field = '';
    if (!(fields.length === 1 && fields[0] === '')) records.push({ line: recordLine, fields });
    fields = [];
  };
  while (i < n) {
    const ch = s[i]!;
    if (atFieldStart && ch === '"') {
      // Quoted field: runs to the next lone quote.
      const startLine = line;
      i += 1;
      let closed = false;
      while (i < n) {
        const c = s[i]!;
        if (c === '"') {
          if (s[i + 1] === '"') {
            field += '"';
            i += 2;
            continue;
          }
          closed = true;
          i += 1;
          break;
        }
        if (c === '\r') {
          line += 1;
          if (s[i + 1] === '\n') {
            field += '\r\n';
            i += 2;
            continue;
          }
        } else if (c === '\n') {
          line += 1;
        }
        field += c;
        i += 1;
      }
      if (!closed) {
        return { ok: false, errors: [{ line: startLine, message: `a quoted field opened on line ${startLine} is never closed` }] };
      }
      if (i < n && s[i] !== ',' && s[i] !== '\r' && s[i] !== '\n') {
        return {
          ok: false,
          errors: [{ line, message: 'text after a closing quote; a quoted field must end at a comma or the end of the line' }],
        };
      }
      atFieldStart = false;
      continue;
    }
    if (ch === ',') {
      fields.push(field);
      field = '';
      atFieldStart = true;
      i += 1;
      continue;
    }
    if (ch === '\r' || ch === '\n') {
      endRecord();
      i += ch === '\r' && s[i + 1] === '\n' ? 2 : 1;
      line += 1;
      recordLine = line;
      atFieldStart = true;
      if (records.length > MAX_CSV_ROWS + 1) {
        return { ok: false, errors: [{ line, message: `more than ${MAX_CSV_ROWS} rows` }] };
      }
      continue;
    }
    if (ch === '"') {
      return {
        ok: false,
        errors: [{ line, message: 'a quote inside an unquoted field; enclose the field in double quotes and double the quote' }],
      };
    }
    field += ch;
    atFieldStart = false;
    i += 1;
  }
  if (!atFieldStart || field !== '' || fields.length > 0) endRecord();
  if (records.length > MAX_CSV_ROWS + 1) return { ok: false, errors: [{ line, message: `more than ${MAX_CSV_ROWS} rows` }] };
  return { ok: true, records };
}

/** One data row read from the CSV. */
export interface CsvRow {
  line: number;
  /** UTC instant, ISO. */
  time: string;
  /** Offset the time was written with, minutes. */
  offset: number;
  cells: Record<string, Cell>;
}

export type CsvReadResult =
  | {
      ok: true;
      /** Measure keys of the columns, in header order (derived columns left out). */ keys: string[];
      /** Rows in time order. */ rows: CsvRow[];
    }
  | { ok: false; errors: CsvIssue[] };

const OFFSET_AT_END = /(?:z|[+-]\d{2}:?\d{2})$/i;
const MARK_REFUSAL = /^(no|n|0|false|none|not done)$/i;

function describe(e: unknown): string {
  return e instanceof Error ? e.message : String(e);
}

/** Reads one field of a known measure into a cell (null when empty), or an error message. */
export function readCsvCell(key: string, raw: string): { ok: true; cell: Cell | null } | { ok: false; error: string } {
  const def = MEASURES.get(key);
  if (!def) return { ok: false, error: `"${key}" is not a measure key` };
  let text = raw;
  if (def.kind === 'number') {
    if (text.trimStart().startsWith("'")) text = text.trimStart().slice(1);
  } else {
    text = unguardFormulaLead(text);
  }
  if (def.kind === 'mark' && MARK_REFUSAL.test(text.trim())) {
    return { ok: false, error: `"${text.trim()}" in a mark column: leave the cell empty when it was not done (any text counts as done)` };
  }
  try {
    const r = parseCellInput(key, text);
    return r.ok ? { ok: true, cell: r.cell } : { ok: false, error: r.error };
  } catch (e) {
    return { ok: false, error: `could not read the value: ${describe(e)}` };
  }
}

/** Reads a time cell: ISO 8601 with an offset. */
export function readCsvTime(raw: string): { ok: true; time: string; offset: number } | { ok: false; error: string } {
  const t = raw.trim();
  if (t === '') return { ok: false, error: 'the time is empty' };
  if (!/^\d{4}-\d{2}-\d{2}[T ]/i.test(t) || !OFFSET_AT_END.test(t)) {
    return { ok: false, error: `"${t}" is not an ISO 8601 date and time with an offset, e.g. 2026-03-01T08:15+01:00` };
  }
  try {
    const r = parseTimeInput(t, 0);
    return r.ok ? { ok: true, time: r.time, offset: r.offset } : { ok: false, error: r.error };
  } catch (e) {
    return { ok: false, error: `could not read the time: ${describe(e)}` };
  }
}

/** Reads CSV text in the command line's input format. Never throws on bad input. */
export function readWorksheetCsv(text: string): CsvReadResult {
  try {
    return readInner(text);
  } catch (e) {
    // Defensive: a bug below must still come back as an error, not a crash.
    return { ok: false, errors: [{ line: 1, message: `could not read the file: ${describe(e)}` }] };
  }
}

function readInner(text: string): CsvReadResult {
  const parsed = parseCsvRecords(text);
  if (!parsed.ok) return parsed;
  const [head, ...data] = parsed.records;
  if (!head)
    return { ok: false, errors: [{ line: 1, message: 'the file is empty; the first line must name the columns, starting with time' }] };
  const names = head.fields.map((f) => f.trim().toLowerCase());
  const errors: CsvIssue[] = [];
  if (names[0] !== 'time') {
    return {
      ok: false,
      errors: [
        { line: head.line, column: head.fields[0] ?? '', message: `the first column must be "time", not "${head.fields[0] ?? ''}"` },
      ],
    };
  }
  /** Column index -> measure key, or null for a skipped derived column. */
  const columns: (string | null)[] = [null];
  const seen = new Set<string>(['time']);
  for (let c = 1; c < names.length; c += 1) {
    const name = names[c]!;
    if (name === '') {
      errors.push({ line: head.line, column: `#${c + 1}`, message: `column ${c + 1} has no name` });
      columns.push(null);
      continue;
    }
    if (seen.has(name)) {
      errors.push({ line: head.line, column: name, message: `column "${name}" appears twice` });
      columns.push(null);
      continue;
    }
    seen.add(name);
    if (name.startsWith(DERIVED_PREFIX)) {
      columns.push(null);
      continue;
    }
    if (!MEASURES.has(name)) {
      errors.push({ line: head.line, column: name, message: `"${name}" is not a measure key (see the measure table in the design notes)` });
      columns.push(null);
      continue;
    }
    columns.push(name);
  }
  if (errors.length) return { ok: false, errors: errors.slice(0, MAX_ISSUES) };

  const rows: CsvRow[] = [];
  for (const rec of data) {
    if (rec.fields.length !== names.length) {
      errors.push({ line: rec.line, message: `${rec.fields.length} fields where the header has ${names.length}` });
      if (errors.length >= MAX_ISSUES) break;
      continue;
    }
    const t = readCsvTime(rec.fields[0]!);
    if (!t.ok) {
      errors.push({ line: rec.line, column: 'time', message: t.error });
      if (errors.length >= MAX_ISSUES) break;
      continue;
    }
    const cells: Record<string, Cell> = {};
    for (let c = 1; c < columns.length; c += 1) {
      const key = columns[c];
      if (!key) continue;
      const r = readCsvCell(key, rec.fields[c]!);
      if (!r.ok) {
        errors.push({ line: rec.line, column: key, message: r.error });
        if (errors.length >= MAX_ISSUES) break;
      } else if (r.cell) {
        cells[key] = r.cell;
      }
    }
    if (errors.length >= MAX_ISSUES) break;
    rows.push({ line: rec.line, time: t.time, offset: t.offset, cells });
  }
  if (errors.length) return { ok: false, errors };
  // Rows in any order in the file; stored in time order (stable for equal times).
  rows.sort((a, b) => (a.time < b.time ? -1 : a.time > b.time ? 1 : a.line - b.line));
  return { ok: true, keys: columns.filter((k): k is string => k !== null), rows };
}

/** Worksheet facts the command line takes as flags. */
export interface CsvFacts {
  label: string;
  id?: string;
  weightKg?: number;
  heightCm?: number;
  sex?: Sex;
  timeZero?: TimeZero;
  goalSets?: string[];
}

export type CsvWorksheetResult = { ok: true; worksheet: Worksheet } | { ok: false; errors: CsvIssue[] };

/**
 * Builds a worksheet from rows read from a CSV. Row ids are `line-<n>` (stable for a file).
 * The edit log gets one `import` entry; no cell entries, so nothing is marked as entered late.
 */
export function worksheetFromCsvRows(
  read: { keys: string[]; rows: CsvRow[] },
  facts: CsvFacts,
  nowMs: number,
  source = 'CSV',
): CsvWorksheetResult {
  const now = new Date(nowMs).toISOString();
  const rows: Row[] = read.rows.map((r) => ({ id: `line-${r.line}`, time: r.time, offset: r.offset, cells: r.cells }));
  const columns = [...DEFAULT_COLUMNS.filter((k) => read.keys.includes(k)), ...read.keys.filter((k) => !DEFAULT_COLUMNS.includes(k))];
  const candidate: Record<string, unknown> = {
    id: facts.id ?? 'csv-import',
    label: facts.label,
    createdAt: now,
    updatedAt: now,
    rev: 0,
    archived: false,
    useIdealWeight: false,
    displayOffset: facts.timeZero?.offset ?? rows[0]?.offset ?? 0,
    goalSets: facts.goalSets ?? [...DEFAULT_SET_IDS],
    customGoals: [],
    derivedColumns: [],
    columns,
    rows,
    log: [{ id: 'import-1', at: now, kind: 'import', note: `imported from ${source}`.slice(0, 500) }],
  };
  if (facts.weightKg !== undefined) candidate['weightKg'] = facts.weightKg;
  if (facts.heightCm !== undefined) candidate['heightCm'] = facts.heightCm;
  if (facts.sex !== undefined) candidate['sex'] = facts.sex;
  if (facts.timeZero !== undefined) candidate['timeZero'] = facts.timeZero;
  const parsed = Worksheet.safeParse(candidate);
  if (!parsed.success) {
    const issue = parsed.error.issues[0];
    const path = issue ? issue.path.join('.') : '';
    return {
      ok: false,
      errors: [{ line: 1, column: path, message: `${path ? `${path}: ` : ''}${issue?.message ?? 'invalid worksheet'}` }],
    };
  }
  return { ok: true, worksheet: parsed.data };
}
