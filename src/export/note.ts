/**
 * The note text: a plain summary of a worksheet for the clinical record.
 *
 * Made to survive a paste into any record system:
 * - ASCII only. Decided fallbacks: µ -> u (so "ug/kg/min", the UCUM spelling), subscript and
 *   superscript digits -> digits (O2, 10^3), >= and <= for the signs, "-" for dashes and minus,
 *   "x" for the multiplication sign, "C" for "°C"; accented letters lose their accents (NFD);
 *   anything else outside ASCII becomes "?". Tabs and line breaks inside values become spaces.
 * - Lines of at most 72 characters (word-wrapped with a hanging indent), LF line ends, no tabs,
 *   no trailing spaces, no layout that depends on a fixed-width font beyond simple indents.
 * - Deterministic for a given worksheet and `atMs`: no wall clock, no locale formatting.
 *
 * Contents: the caution, the worksheet label, time zero and its basis, the time elapsed at the
 * moment of the summary, each goal with a status word and its time (from the goal engine),
 * latest values against targets, the lactate trend, fluid totals (mL and mL/kg with the dosing
 * weight basis), the peak vasopressor dose as norepinephrine equivalent, a compact timeline of
 * interventions, and the entries made late.
 *
 * Only rows at or before `atMs` are summarised (as the goal engine does).
 * Pure: no DOM, no clock.
 */
import { evaluate, worksheetSetIds, type GoalStatus } from '../goals/index.js';
import { dosingWeight } from '../sheet/body.js';
import { deriveWorksheet, NE_FACTORS } from '../sheet/derived.js';
import { MEASURES } from '../sheet/measures.js';
import type { Row, Worksheet } from '../sheet/model.js';
import { formatNumber } from '../sheet/parse.js';
import { formatClock, formatDateTime, formatDuration, formatOffset } from '../sheet/time.js';
import { LATE_ENTRY_MINUTES, lateEntries } from '../sheet/worksheet.js';

export const NOTE_WIDTH = 72;

export const NOTE_CAUTION =
  'CAUTION: Decision support only. Defaults follow published guidance and must be checked against local protocols and licensed clinical judgment.';

const ASCII_MAP: Readonly<Record<string, string>> = {
  µ: 'u',
  μ: 'u',
  '₀': '0',
  '₁': '1',
  '₂': '2',
  '₃': '3',
  '₄': '4',
  '²': '2',
  '³': '3',
  '⁹': '9',
  '⁻': '-',
  '¹': '1',
  '≥': '>=',
  '≤': '<=',
  '≠': '!=',
  '≈': '~',
  '±': '+/-',
  '–': '-',
  '—': '-',
  '−': '-',
  '‐': '-',
  '‑': '-',
  '×': 'x',
  '÷': '/',
  '°': '',
  '✓': 'yes',
  '…': '...',
  Δ: 'change ',
  Σ: 'total ',
  '‘': "'",
  '’': "'",
  '“': '"',
  '”': '"',
  '→': '->',
  '←': '<-',
  '·': '.',
  '•': '-',
  '\u00A0': ' ',
  '\u2009': ' ',
  '\u202F': ' ',
  ß: 'ss',
  æ: 'ae',
  Æ: 'AE',
  ø: 'o',
  Ø: 'O',
  œ: 'oe',
  Œ: 'OE',
};

/** Folds text to printable ASCII by the fallbacks above. */
export function toAscii(text: string): string {
  let out = '';
  for (const ch of text) {
    const mapped = ASCII_MAP[ch];
    if (mapped !== undefined) {
      out += mapped;
      continue;
    }
    const code = ch.codePointAt(0)!;
    if (code === 0x09 || code === 0x0a || code === 0x0d) {
      out += ' ';
      continue;
    }
    if (code >= 0x20 && code < 0x7f) {
      out += ch;
      continue;
    }
    if (code < 0x20 || code === 0x7f) continue;
    const base = ch.normalize('NFD').replace(/[\u0300-\u036f]/g, '');
    out += /^[\x20-\x7e]+$/.test(base) ? base : '?';
  }
  return out;
}

/**
 * Word-wraps one paragraph to `width` columns: the first line starts with `first`, the others
 * with `rest` (a hanging indent). A word longer than a line is cut.
 */
export function wrap(text: string, first = '', rest = first, width = NOTE_WIDTH): string[] {
  const words = toAscii(text)
    .split(' ')
    .filter((w) => w.length > 0);
  const lines: string[] = [];
  let line = first;
  let empty = true;
  const indent = (): string => (lines.length === 0 ? first : rest);
  for (let word of words) {
    while (word.length > 0) {
      const room = width - line.length - (empty ? 0 : 1);
      if (word.length <= room) {
        line += (empty ? '' : ' ') + word;
        empty = false;
        word = '';
      } else if (!empty) {
        lines.push(line);
        line = indent();
        empty = true;
      } else {
        const cut = Math.max(1, width - line.length);
        line += word.slice(0, cut);
        word = word.slice(cut);
        lines.push(line);
        line = indent();
        empty = true;
      }
    }
  }
  if (!empty || lines.length === 0) lines.push(line.trimEnd());
  return lines.map((l) => l.trimEnd());
}

export interface NoteOptions {
  /** The moment of the summary. */
  atMs: number;
  /** Goal sets; default the worksheet's own (plus `custom` when it has its own goals). */
  setIds?: readonly string[];
  /** Goal statuses already computed for the same moment and sets (saves a second evaluation). */
  goals?: readonly GoalStatus[];
  /** A remark printed under time zero (e.g. that it was suggested rather than chosen). */
  timeZeroRemark?: string;
}

const STATUS_WORD: Record<GoalStatus['status'], string> = {
  met: 'MET',
  pending: 'PENDING',
  missed: 'MISSED',
  'not-applicable': 'N/A',
  'no-data': 'NO DATA',
};
const STATUS_COL = 9;

function num(row: Row, key: string): number | undefined {
  const c = row.cells[key];
  return c && typeof c.value === 'number' ? c.value : undefined;
}

/** "4.6 mmol/L" in the measure's display precision and unit label. */
function measureText(key: string, v: number): string {
  const def = MEASURES.get(key);
  if (!def) return String(v);
  const unit = def.unit?.label ? ` ${def.unit.label}` : '';
  return `${formatNumber(def, v)}${unit}`;
}

function round(v: number, decimals: number): string {
  return String(Number(v.toFixed(decimals)));
}

/** The note text (LF line ends, a final newline). */
export function worksheetNote(ws: Worksheet, options: NoteOptions): string {
  const atMs = options.atMs;
  const offset = ws.displayOffset;
  const t0Ms = ws.timeZero ? Date.parse(ws.timeZero.time) : undefined;
  const refDay = formatDateTime(new Date(t0Ms ?? atMs).toISOString(), offset).slice(0, 10);
  const timeText = (ms: number): string => {
    const iso = new Date(ms).toISOString();
    const full = formatDateTime(iso, offset);
    return full.slice(0, 10) === refDay ? formatClock(iso, offset) : full;
  };
  const dur = (ms: number): string => toAscii(formatDuration(ms));
  const rel = (ms: number): string => {
    if (t0Ms === undefined) return '';
    const d = ms - t0Ms;
    if (d === 0) return 'at time zero';
    return d > 0 ? `${dur(d)} after time zero` : `${dur(-d)} before time zero`;
  };

  const rows = ws.rows.filter((r) => Date.parse(r.time) <= atMs);
  const wsAt: Worksheet = { ...ws, rows };
  const setIds = options.setIds ?? worksheetSetIds(ws);
  const goals = options.goals ?? evaluate(ws, setIds, atMs);
  const derived = deriveWorksheet(wsAt);
  const weight = dosingWeight(ws);

  const out: string[] = [];
  const para = (text: string, first = '', rest = first): void => {
    out.push(...wrap(text, first, rest));
  };
  const blank = (): void => {
    if (out.length > 0 && out[out.length - 1] !== '') out.push('');
  };
  const heading = (text: string): void => {
    blank();
    out.push(text.toUpperCase());
  };

  // --- header -------------------------------------------------------------------------------
  out.push('SEPSIS RESUSCITATION WORKSHEET SUMMARY (TIDEMARK)');
  para(NOTE_CAUTION);
  if (ws.demo) para('INVENTED DEMO SCENARIO: fictional data, not a real patient.');
  blank();
  para(`Worksheet: ${ws.label}`);
  const facts: string[] = [];
  facts.push(ws.weightKg !== undefined ? `Weight ${round(ws.weightKg, 1)} kg` : 'Weight not charted');
  if (ws.heightCm !== undefined) facts.push(`height ${round(ws.heightCm, 1)} cm`);
  if (ws.sex !== undefined) facts.push(`sex ${ws.sex}`);
  para(`${facts.join('; ')}.`);
  if (weight) para(`Dosing weight: ${round(weight.kg, 1)} kg (${weight.explanation}).${weight.warning ? ` ${weight.warning}` : ''}`);
  if (ws.timeZero && t0Ms !== undefined) {
    const b = ws.timeZero.basis === 'other' ? `other (${ws.timeZero.reason ?? ''})` : ws.timeZero.basis;
    para(`Time zero: ${formatDateTime(ws.timeZero.time, offset)} ${formatOffset(offset)}, basis: ${b}.`);
  } else {
    para('Time zero: not set. Goal clocks cannot run without it.');
  }
  if (options.timeZeroRemark) para(options.timeZeroRemark);
  const atIso = new Date(atMs).toISOString();
  para(`Summary as of: ${formatDateTime(atIso, offset)} ${formatOffset(offset)}${t0Ms !== undefined ? `, ${rel(atMs)}` : ''}.`);
  para(`Times are local (UTC${formatOffset(offset)}).`);
  if (rows.length < ws.rows.length) para(`Left out: ${ws.rows.length - rows.length} rows timed after the summary.`);

  // --- goals --------------------------------------------------------------------------------
  // Time-bound goals first; standing targets (with their latest value) in their own section.
  const goalSection = (title: string, list: readonly GoalStatus[], detail: (g: GoalStatus) => string): void => {
    if (list.length === 0) return;
    heading(title);
    let currentSet = '';
    for (const g of list) {
      if (g.setId !== currentSet) {
        currentSet = g.setId;
        blank();
        para(`${g.setTitle} [${g.setId}]`);
      }
      const word = STATUS_WORD[g.status].padEnd(STATUS_COL, ' ');
      para(`${g.label} [${g.goalId}]`, word, ' '.repeat(STATUS_COL));
      para(detail(g), ' '.repeat(STATUS_COL));
    }
  };
  if (goals.length === 0) {
    heading('Goals');
    para('No goal sets chosen.');
  }
  goalSection(
    'Goals',
    goals.filter((g) => g.target === null),
    (g) => goalDetail(g, timeText, rel, dur),
  );
  goalSection(
    'Targets: latest value against target',
    goals.filter((g) => g.target !== null),
    (g) => {
      const t = g.target!;
      if (g.status === 'not-applicable' || g.status === 'no-data' || t.latestValue === null || t.latestAt === null) {
        return `Target ${t.rangeText}. ${g.explanation}`;
      }
      let text = `Target ${t.rangeText}; latest ${round(t.latestValue, MEASURES.get(t.key)?.decimals ?? 2)}${t.unit ? ` ${t.unit}` : ''} at ${timeText(Date.parse(t.latestAt))}`;
      if (t.ageMinutes !== null) text += ` (${dur(t.ageMinutes * 60_000)} old)`;
      text += t.inRangeNow === true ? ', in range now' : t.inRangeNow === false ? ', OUT OF RANGE now' : '';
      if (t.shareInRange !== null) text += `; in range ${Math.round(t.shareInRange * 100)}% of charted time`;
      return `${text}.`;
    },
  );

  // --- lactate ------------------------------------------------------------------------------
  heading('Lactate');
  const lactates = rows.filter((r) => num(r, 'lactate') !== undefined);
  if (lactates.length === 0) para('No lactate charted.');
  const firstLac = lactates.length ? num(lactates[0]!, 'lactate')! : undefined;
  for (const r of lactates) {
    const v = num(r, 'lactate')!;
    let text = `${timeText(Date.parse(r.time))}  ${measureText('lactate', v)}`;
    if (r !== lactates[0] && firstLac !== undefined && firstLac > 0) {
      const pct = (100 * (v - firstLac)) / firstLac;
      text += ` (${pct > 0 ? '+' : ''}${round(pct, 0)}% from first)`;
    }
    para(text, '- ', '  ');
  }

  // --- fluids -------------------------------------------------------------------------------
  heading('Fluids');
  const since = (r: Row): boolean => t0Ms === undefined || Date.parse(r.time) >= t0Ms;
  const total = (key: string): number => rows.filter(since).reduce((s, r) => s + (num(r, key) ?? 0), 0);
  const charted = (key: string): boolean => rows.filter(since).some((r) => num(r, key) !== undefined);
  const from = t0Ms === undefined ? 'since the first row' : 'since time zero';
  const crystalloid = total('fluid_ml');
  let fluidText = `Crystalloid ${from}: ${Math.round(crystalloid)} mL`;
  if (weight)
    fluidText += ` = ${round(crystalloid / weight.kg, 1)} mL/kg of ${round(weight.kg, 1)} kg (${weight.basis === 'ideal' ? 'ideal body weight, Devine' : 'actual body weight'})`;
  else fluidText += ' (no weight: mL/kg cannot be given)';
  para(`${fluidText}.`, '- ', '  ');
  if (charted('blood_ml')) para(`Blood products ${from}: ${Math.round(total('blood_ml'))} mL.`, '- ', '  ');
  if (charted('uo_ml')) {
    // Urine is charted per interval: say which stretch of time the sum covers.
    const idx = rows.map((r, i) => (since(r) && num(r, 'uo_ml') !== undefined ? i : -1)).filter((i) => i >= 0);
    const first = idx[0]!;
    const startMs = first > 0 ? Date.parse(rows[first - 1]!.time) : undefined;
    const span = `${startMs !== undefined ? timeText(startMs) : 'start'}-${timeText(Date.parse(rows[idx[idx.length - 1]!]!.time))}`;
    para(`Urine charted ${from}: ${Math.round(total('uo_ml'))} mL (intervals ${span}).`, '- ', '  ');
  }

  // --- vasopressors -------------------------------------------------------------------------
  heading('Vasopressors');
  let peak: { v: number; row: Row } | undefined;
  derived.forEach((d, i) => {
    const v = d.values['ne_equivalent'];
    if (v !== undefined && v > 0 && (!peak || v > peak.v + 1e-12)) peak = { v, row: rows[i]! };
  });
  if (!peak) {
    para('No vasopressor charted.');
  } else {
    const parts = Object.keys(NE_FACTORS)
      .filter((k) => (num(peak!.row, k) ?? 0) > 0)
      .map((k) => `${MEASURES.get(k)!.label.toLowerCase()} ${measureText(k, num(peak!.row, k)!)}`);
    para(
      `Peak dose: ${round(peak.v, 3)} ug/kg/min norepinephrine equivalent, first reached at ${timeText(Date.parse(peak.row.time))} (${parts.join(' + ')}; factors of Goradia et al. 2021).`,
      '- ',
      '  ',
    );
    // What runs at the summary time: the last charted rate of each drug, when above zero.
    const running: string[] = [];
    for (const key of ['norepinephrine', 'epinephrine', 'phenylephrine', 'dopamine', 'dobutamine', 'vasopressin']) {
      const last = [...rows].reverse().find((r) => num(r, key) !== undefined);
      const v = last ? num(last, key)! : 0;
      if (last && v > 0)
        running.push(`${MEASURES.get(key)!.label.toLowerCase()} ${measureText(key, v)} (charted ${timeText(Date.parse(last.time))})`);
    }
    para(running.length ? `Running at the summary time: ${running.join(', ')}.` : 'None running at the summary time.', '- ', '  ');
  }

  // --- timeline -----------------------------------------------------------------------------
  heading('Timeline');
  const late = lateEntries(wsAt);
  const lateAt = new Map<string, number>();
  for (const e of late) {
    // Only entries of a row's cell can mark a timeline row.
    if (e.rowId === undefined || e.key === undefined) continue;
    const k = `${e.rowId}|${e.key}`;
    if (!lateAt.has(k)) lateAt.set(k, Date.parse(e.at));
  }
  const lateMark = (row: Row, keys: readonly string[]): string => {
    const t = keys.map((k) => lateAt.get(`${row.id}|${k}`)).filter((x): x is number => x !== undefined);
    return t.length ? ` [LATE ENTRY, made ${timeText(Math.min(...t))}]` : '';
  };
  const events: { ms: number; text: string }[] = [];
  if (t0Ms !== undefined && ws.timeZero) events.push({ ms: t0Ms, text: `TIME ZERO (${ws.timeZero.basis})` });
  const lastRate = new Map<string, number>();
  let runningFluid = 0;
  rows.forEach((r, i) => {
    const ms = Date.parse(r.time);
    // Volumes are amounts since the previous row (design.md): show the interval they cover.
    const interval = i > 0 ? `${timeText(Date.parse(rows[i - 1]!.time))}-${timeText(ms)}` : `up to ${timeText(ms)}`;
    const add = (text: string, keys: readonly string[]): void => {
      events.push({ ms, text: text + lateMark(r, keys) });
    };
    const mark = (key: string, label: string): void => {
      const c = r.cells[key];
      if (c && c.value === true) add(`${label}${c.text ? `: ${c.text}` : ''}`, [key]);
    };
    mark('infection_suspected', 'Infection suspected');
    mark('cultures_drawn', 'Blood cultures drawn');
    const abx = r.cells['antibiotic'];
    if (abx && typeof abx.value === 'string') add(`Antibiotic: ${abx.value}`, ['antibiotic']);
    const fl = num(r, 'fluid_ml');
    if (fl !== undefined) {
      if (since(r)) runningFluid += fl;
      add(
        `Crystalloid ${Math.round(fl)} mL over ${interval}${since(r) ? ` (${Math.round(runningFluid)} mL ${t0Ms === undefined ? 'in all' : 'since time zero'})` : ' (before time zero)'}`,
        ['fluid_ml'],
      );
    }
    const bl = num(r, 'blood_ml');
    if (bl !== undefined) add(`Blood product ${Math.round(bl)} mL over ${interval}`, ['blood_ml']);
    for (const key of ['norepinephrine', 'epinephrine', 'phenylephrine', 'dopamine', 'dobutamine', 'vasopressin']) {
      const v = num(r, key);
      if (v === undefined) continue;
      const prev = lastRate.get(key) ?? 0;
      const name = MEASURES.get(key)!.label;
      if (prev <= 0 && v > 0) add(`${name} started at ${measureText(key, v)}`, [key]);
      else if (prev > 0 && v <= 0) add(`${name} stopped`, [key]);
      else if (prev > 0 && Math.abs(v - prev) > 1e-12)
        add(`${name} ${formatNumber(MEASURES.get(key)!, prev)} -> ${measureText(key, v)}`, [key]);
      lastRate.set(key, v);
    }
    const lac = num(r, 'lactate');
    if (lac !== undefined) add(`Lactate ${measureText('lactate', lac)}`, ['lactate']);
    mark('perfusion_reassessed', 'Perfusion reassessed');
  });
  events.sort((a, b) => a.ms - b.ms);
  if (events.length === 0) para('Nothing charted.');
  for (const e of events) {
    const t = timeText(e.ms);
    para(e.text, `${t}  `, ' '.repeat(t.length + 2));
  }

  // --- late entries -------------------------------------------------------------------------
  heading(`Entries made late (over ${LATE_ENTRY_MINUTES} min after the time they describe)`);
  const rowById = new Map(rows.map((r) => [r.id, r]));
  const lateRows = late
    .map((e) => ({ e, row: rowById.get(e.rowId ?? '') }))
    .filter((x): x is { e: (typeof late)[number]; row: Row } => x.row !== undefined)
    .sort((a, b) => Date.parse(a.row.time) - Date.parse(b.row.time) || Date.parse(a.e.at) - Date.parse(b.e.at));
  if (lateRows.length === 0) para('None.');
  // One line per row and entry time: "08:10, entered 09:40 (1 h 30 min later): lactate, ...".
  const groups = new Map<string, { rowMs: number; atMs: number; names: string[]; notes: string[] }>();
  for (const { e, row } of lateRows) {
    const rowMs = Date.parse(row.time);
    const entryMs = Date.parse(e.at);
    const k = `${row.id}|${entryMs}`;
    const grp = groups.get(k) ?? { rowMs, atMs: entryMs, names: [], notes: [] };
    const key = e.key ?? '';
    grp.names.push(MEASURES.get(key)?.label.toLowerCase().replace(/,/g, '') ?? key);
    if (e.note) grp.notes.push(e.note);
    groups.set(k, grp);
  }
  for (const grp of groups.values()) {
    const notes = grp.notes.length ? `; note: ${grp.notes.join('; ')}` : '';
    para(
      `${timeText(grp.rowMs)} values, entered ${timeText(grp.atMs)} (${dur(grp.atMs - grp.rowMs)} later): ${grp.names.join(', ')}${notes}.`,
      '- ',
      '  ',
    );
  }

  blank();
  para('End of summary.');
  return out.map((l) => toAscii(l).trimEnd()).join('\n') + '\n';
}

/** The second line of a goal: when it was met, what is due, or why it cannot be judged. */
function goalDetail(g: GoalStatus, timeText: (ms: number) => string, rel: (ms: number) => string, dur: (ms: number) => string): string {
  const due = g.deadline ? `due by ${timeText(Date.parse(g.deadline))}` : '';
  switch (g.status) {
    case 'met': {
      if (g.target) return g.explanation;
      const at = g.metAt ? `Done ${timeText(Date.parse(g.metAt))}, ${rel(Date.parse(g.metAt))}` : 'Done';
      return `${at}${due ? `; ${due}` : ''}.`;
    }
    case 'pending': {
      if (g.minutesLeft !== null && due) return `Not yet met; ${due} (${dur(g.minutesLeft * 60_000)} left).`;
      return g.explanation || 'Not yet met.';
    }
    case 'missed': {
      if (g.late && g.metAt) {
        return `Done late ${timeText(Date.parse(g.metAt))}, ${rel(Date.parse(g.metAt))}${g.minutesLate !== null ? `: ${dur(g.minutesLate * 60_000)} after the deadline` : ''}${due ? ` (${due})` : ''}.`;
      }
      if (!g.metAt && due && g.minutesOverdue !== null && !g.failRowIds.length) {
        return `Not done; ${due}, ${dur(g.minutesOverdue * 60_000)} overdue.`;
      }
      return g.explanation || 'Missed.';
    }
    default:
      return g.explanation;
  }
}
