/**
 * CSV export of a worksheet (RFC 4180), safe to open in a spreadsheet program.
 *
 * Shape (the same shape the command line reads back, see csv-read.ts):
 * - a header line of keys: `time`, then every charted measure key that has a value in any row, in
 *   catalog order (src/sheet/measures.ts), then the computed columns as `derived.<key>`;
 * - one line per row, in time order; records end in CRLF (RFC 4180 §2.1);
 * - `time` is ISO 8601 with the row's own offset ("2026-03-01T08:15:00+01:00");
 * - numbers are in the canonical unit of their key (design.md measure table), written by our own
 *   formatter (plain decimal, no exponent, no thousands separator);
 * - a mark cell is written `yes`, or its text when it has one; text cells as typed.
 *
 * Decisions:
 * - Columns are the measures with data, not the worksheet's visible columns: a hidden column
 *   that holds values must not vanish from an export, and an empty visible column adds nothing.
 * - Computed columns (built-in derived measures, scores, the worksheet's own derived columns)
 *   are prefixed `derived.` so that a derived key that is also a charted key
 *   (`map`: measured vs estimated) cannot collide, and so the reader can skip them (they are
 *   recomputed from the charted values, never imported).
 * - Formula injection (OWASP "CSV Injection"; OWASP ASVS 5.0 V1.2.10; CWE-1236): every text
 *   field (text cells, mark texts) whose first character is = + - @ Tab CR LF or NUL gets a
 *   leading single quote. We also look past leading spaces and invisible characters, because a
 *   leading NUL or other invisible character before `=` can still produce a live formula in some
 *   spreadsheet programs (reliability-security-performance.md §4), and treat the full-width
 *   forms of = + - @ the same way (defensive, from memory, unconfirmed).
 * - Numbers written by our own formatter are data, not formulas, and are NOT prefixed: `-5`
 *   (base excess), `-2` (CVP) or `-25.3` (lactate change) stay numbers a spreadsheet can sum;
 *   prefixing would turn them into text. This exemption applies only when the written text
 *   matches the strict pattern `-?digits[.digits]`; anything else goes through the guard.
 *
 * Pure: no DOM, no clock.
 */
import { deriveAll, DERIVED_DEFS, SCORE_DEFS } from '../sheet/derived.js';
import { MEASURE_KEYS, MEASURES } from '../sheet/measures.js';
import type { Cell, Worksheet } from '../sheet/model.js';
import { formatOffset } from '../sheet/time.js';

/** Record separator required by RFC 4180 §2.1. */
export const CSV_EOL = '\r\n';

/** Header prefix of computed (read-only) columns. */
export const DERIVED_PREFIX = 'derived.';

/**
 * Characters that make a spreadsheet read a cell as a formula when they lead it: OWASP CSV
 * Injection lists = + - @ Tab (0x09) CR (0x0D) LF (0x0A); OWASP ASVS 5.0 V1.2.10 adds NUL.
 * The full-width forms U+FF1D U+FF0B U+FF0D U+FF20 are added defensively (from memory).
 */
export const FORMULA_LEAD = new Set(['=', '+', '-', '@', '\t', '\r', '\n', '\0', '\uFF1D', '\uFF0B', '\uFF0D', '\uFF20']);

/** Invisible or blank characters a spreadsheet may skip before reading a formula. */
// eslint-disable-next-line no-control-regex -- control characters are exactly what this pattern skips
const INVISIBLE = /^[\s\u0000-\u001F\u007F-\u009F\u00A0\u00AD\u180E\u200B-\u200F\u2028-\u202F\u205F-\u2064\u3000\uFEFF]*/u;

/** True when a text field would be read as a formula (or could be, after invisible characters). */
export function isFormulaLike(text: string): boolean {
  if (text.length === 0) return false;
  if (FORMULA_LEAD.has(text[0]!)) return true;
  const rest = text.replace(INVISIBLE, '');
  return rest.length > 0 && rest.length < text.length && FORMULA_LEAD.has(rest[0]!);
}

/**
 * Neutralises a text field for spreadsheets by prefixing a single quote when it could be read as
 * a formula. Idempotent: a guarded field starts with `'`, which is not dangerous.
 */
export function guardFormulaLead(text: string): string {
  return isFormulaLike(text) ? `'${text}` : text;
}

/**
 * Inverse of guardFormulaLead for reading our own files back: drops one leading quote when what
 * follows would have been guarded. (A text that itself began with `'=` comes back as `=`: the one
 * lossy case, accepted because the guard must stay idempotent.)
 */
export function unguardFormulaLead(text: string): string {
  return text.startsWith("'") && isFormulaLike(text.slice(1)) ? text.slice(1) : text;
}

/** RFC 4180 §2.6–2.7: quote a field holding `"`, `,`, CR or LF; double embedded quotes. */
export function escapeCsvField(field: string): string {
  return /[",\r\n]/.test(field) ? `"${field.replace(/"/g, '""')}"` : field;
}

/** The strict shape of numbers our formatter writes; only these skip the formula guard. */
export const CSV_NUMBER = /^-?\d+(?:\.\d+)?$/;

/**
 * Writes a finite number as plain decimal text, without exponent: 0.0000001 -> "0.0000001".
 * Up to 12 significant digits (the precision parseCellInput keeps).
 */
export function formatCsvNumber(value: number): string {
  if (!Number.isFinite(value)) throw new Error(`formatCsvNumber: not a finite number (${value})`);
  const v = Number(value.toPrecision(12));
  if (Object.is(v, -0) || v === 0) return '0';
  let s = String(v);
  if (/e/i.test(s)) {
    // Plain decimal for very small or very large magnitudes.
    if (Math.abs(v) >= 1e21) return BigInt(Math.round(v)).toString();
    const digits = Math.max(0, Math.min(100, 11 - Math.floor(Math.log10(Math.abs(v)))));
    s = v.toFixed(digits);
    if (s.includes('.')) s = s.replace(/0+$/, '').replace(/\.$/, '');
  }
  return s;
}

/** A number field: plain digits are data; anything else (never expected) is guarded. */
function numberField(value: number): string {
  const s = formatCsvNumber(value);
  return CSV_NUMBER.test(s) ? s : guardFormulaLead(s);
}

/** A row time as ISO 8601 with its own offset; milliseconds only when present. */
export function csvTime(iso: string, offset: number): string {
  const ms = Date.parse(iso);
  const local = new Date(ms + offset * 60_000);
  const p = (n: number, w = 2): string => String(n).padStart(w, '0');
  const frac = local.getUTCMilliseconds() ? `.${p(local.getUTCMilliseconds(), 3)}` : '';
  return `${local.getUTCFullYear()}-${p(local.getUTCMonth() + 1)}-${p(local.getUTCDate())}T${p(local.getUTCHours())}:${p(local.getUTCMinutes())}:${p(local.getUTCSeconds())}${frac}${formatOffset(offset)}`;
}

/** The text written for one stored cell. */
export function csvCell(cell: Cell | undefined): string {
  if (!cell) return '';
  if (cell.value === true) return cell.text !== undefined && cell.text.trim() !== '' ? guardFormulaLead(cell.text) : 'yes';
  if (typeof cell.value === 'number') return numberField(cell.value);
  return guardFormulaLead(cell.value);
}

export interface CsvOptions {
  /** Include the computed columns (`derived.<key>`). Default true. */
  derived?: boolean;
}

/** Measure keys, in catalog order, that have a value in at least one row. */
export function chartedKeys(ws: Worksheet): string[] {
  const present = new Set<string>();
  for (const row of ws.rows) for (const k of Object.keys(row.cells)) present.add(k);
  const known = MEASURE_KEYS.filter((k) => present.has(k));
  // Keys not in the catalog (from a newer version) are kept after the catalog ones, sorted.
  const unknown = [...present].filter((k) => !MEASURES.has(k)).sort();
  return [...known, ...unknown];
}

function roundTo(value: number, decimals: number): number {
  return Number(value.toFixed(Math.max(0, Math.min(20, decimals))));
}

/** The worksheet as RFC 4180 CSV text (CRLF line ends, a header, one line per row). */
export function worksheetToCsv(ws: Worksheet, options: CsvOptions = {}): string {
  const keys = chartedKeys(ws);
  const withDerived = options.derived ?? true;
  // Built-in derived measures, then scores (SOFA, qSOFA, SIRS), then the worksheet's own columns.
  const derivedRows = withDerived ? deriveAll(ws).rows : [];
  const derivedById = new Map(derivedRows.map((d) => [d.rowId, d.values]));
  const candidates: { key: string; decimals?: number }[] = [
    ...DERIVED_DEFS.map((d) => ({ key: d.key, decimals: d.decimals })),
    ...SCORE_DEFS.map((d) => ({ key: d.key, decimals: d.decimals })),
    ...ws.derivedColumns.map((c) => ({ key: c.key })),
  ];
  const seen = new Set<string>();
  const derivedKeys = candidates.filter((c) => {
    if (seen.has(c.key)) return false;
    seen.add(c.key);
    return derivedRows.some((r) => r.values[c.key] !== undefined && Number.isFinite(r.values[c.key]));
  });

  const header = ['time', ...keys, ...derivedKeys.map((d) => DERIVED_PREFIX + d.key)];
  const lines = [header.map(escapeCsvField).join(',')];
  for (const row of ws.rows) {
    const fields = [csvTime(row.time, row.offset)];
    for (const k of keys) fields.push(csvCell(row.cells[k]));
    const dv = derivedById.get(row.id) ?? {};
    for (const d of derivedKeys) {
      const v = dv[d.key];
      // Built-in values are rounded to one more decimal than they are shown with; user columns
      // keep 12 significant digits.
      fields.push(v === undefined || !Number.isFinite(v) ? '' : numberField(d.decimals === undefined ? v : roundTo(v, d.decimals + 1)));
    }
    lines.push(fields.map(escapeCsvField).join(','));
  }
  return lines.join(CSV_EOL) + CSV_EOL;
}
