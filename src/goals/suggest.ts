/**
 * Time-zero suggestions from the charted rows (never applied automatically; the user chooses).
 *
 * Severe sepsis presentation (SEP-1, reference file §3a): a documented suspicion of infection
 * (`infection_suspected` mark), at least 2 SEP-1 SIRS criteria and at least 1 organ dysfunction,
 * all within 6 h of each other. The suggested time is when the last of them was met: the earliest
 * moment T at which the 6-h window ending at T holds all three.
 *
 * Septic shock presentation (SEP-1, reference file §3a/§3b): within 6 h after severe sepsis
 * presentation (or after the worksheet's time zero when no severe sepsis is found), the earlier of
 * an initial lactate ≥ 4 mmol/L and persistent hypotension after 30 mL/kg (two consecutive
 * readings SBP < 90 or MAP < 65 within 1 h after the fluids end); never before severe sepsis.
 *
 * Not modelled: clinician documentation of severe sepsis or shock, "present at triage" rules,
 * exclusions for chronic or medication-related signs, bands and ventilation. Pure.
 */
import { MINUTE_MS, toInstant } from '../sheet/clock.js';
import type { TimeZeroBasis, Worksheet } from '../sheet/model.js';
import { clockText, makeContext, num, timedRows, type EvalContext } from './context.js';
import { evalPredicate } from './predicates.js';
import { sep1Oliguria, sep1OrganCriteria, sep1SirsCriteria, type Sep1Values, type UrineInterval } from './sep1-criteria.js';
import { SEP1_INITIAL_LACTATE_4, SEP1_PERSISTENT_HYPOTENSION } from './sets/sep1.js';

export const SEP1_WINDOW_MINUTES = 360;

export interface CriterionHit {
  /** `infection`, `sirs:temp`, `organ:lactate`... */
  criterion: string;
  /** Plain words with the value and threshold. */
  reason: string;
  rowId: string;
  /** UTC ISO. */
  time: string;
}

export interface TimeZeroSuggestion {
  kind: 'severe-sepsis' | 'septic-shock';
  /** Suggested instant, UTC ISO. */
  time: string;
  /** Offset of the row it comes from (to show and store it as entered). */
  offset: number;
  /** The basis to store if the user accepts it. */
  basis: TimeZeroBasis;
  /** Rows that support it (for highlighting). */
  rowIds: string[];
  criteria: CriterionHit[];
  explanation: string;
}

export interface TimeZeroSuggestions {
  severeSepsis: TimeZeroSuggestion | null;
  septicShock: TimeZeroSuggestion | null;
  /** Why a suggestion is missing, and what is not modelled. */
  notes: string[];
}

interface Event extends CriterionHit {
  ms: number;
  offset: number;
  group: 'infection' | 'sirs' | 'organ';
}

function valuesOf(ctx: EvalContext, r: ReturnType<typeof timedRows>[number]): Sep1Values {
  const k = (key: string): number | undefined => num(ctx, r, key);
  return {
    temp: k('temp'),
    hr: k('hr'),
    rr: k('rr'),
    wbc: k('wbc'),
    sbp: k('sbp'),
    map: k('map'),
    creatinine: k('creatinine'),
    bilirubin: k('bilirubin'),
    platelets: k('platelets'),
    inr: k('inr'),
    lactate: k('lactate'),
  };
}

/** Every criterion occurrence in the rows, in time order. */
export function sep1CriterionEvents(ctx: EvalContext): Event[] {
  const events: Event[] = [];
  const urine: UrineInterval[] = [];
  for (const r of ctx.rows) {
    const time = r.row.time;
    const base = { rowId: r.row.id, time, ms: r.ms, offset: r.row.offset };
    const mark = r.row.cells['infection_suspected'];
    if (mark)
      events.push({
        ...base,
        group: 'infection',
        criterion: 'infection',
        reason: `infection suspected${mark.text ? ` (${mark.text})` : ''}`,
      });
    const v = valuesOf(ctx, r);
    for (const s of sep1SirsCriteria(v)) events.push({ ...base, group: 'sirs', criterion: `sirs:${s.criterion}`, reason: s.reason });
    for (const o of sep1OrganCriteria(v, ctx.ws.baselineSbp))
      events.push({ ...base, group: 'organ', criterion: `organ:${o.criterion}`, reason: o.reason });
    const rate = num(ctx, r, 'uo_ml_kg_h');
    if (rate !== undefined && r.prevMs !== undefined) urine.push({ rowId: r.row.id, endMs: r.ms, startMs: r.prevMs, rate });
  }
  const byId = new Map(ctx.rows.map((r) => [r.row.id, r]));
  for (const o of sep1Oliguria(urine)) {
    const r = byId.get(o.rowId)!;
    events.push({
      rowId: o.rowId,
      time: r.row.time,
      ms: o.ms,
      offset: r.row.offset,
      group: 'organ',
      criterion: 'organ:urine',
      reason: `urine output below 0.5 mL/kg/h since ${clockText(ctx, o.runStartMs)} (2 h or more)`,
    });
  }
  return events.sort((a, b) => a.ms - b.ms);
}

function severeSepsis(ctx: EvalContext): { suggestion: TimeZeroSuggestion | null; note?: string } {
  const events = sep1CriterionEvents(ctx);
  const windowMs = SEP1_WINDOW_MINUTES * MINUTE_MS;
  const times = [...new Set(events.map((e) => e.ms))];
  for (const T of times) {
    const inWindow = events.filter((e) => e.ms >= T - windowMs && e.ms <= T);
    const latest = new Map<string, Event>();
    for (const e of inWindow) latest.set(e.criterion, e); // later events overwrite: latest of each kind
    const infection = latest.get('infection');
    const sirs = [...latest.values()].filter((e) => e.group === 'sirs');
    const organ = [...latest.values()].filter((e) => e.group === 'organ');
    if (!infection || sirs.length < 2 || organ.length < 1) continue;
    const criteria = [infection, ...sirs, ...organ].sort((a, b) => a.ms - b.ms);
    const last = criteria.filter((e) => e.ms === T).pop() ?? criteria[criteria.length - 1]!;
    const hits: CriterionHit[] = criteria.map(({ criterion, reason, rowId, time }) => ({ criterion, reason, rowId, time }));
    return {
      suggestion: {
        kind: 'severe-sepsis',
        time: toInstant(T),
        offset: last.offset,
        basis: 'criteria',
        rowIds: [...new Set(criteria.map((e) => e.rowId))],
        criteria: hits,
        explanation: `Severe sepsis criteria (SEP-1) all met by ${clockText(ctx, T)}, within 6 h: ${criteria.map((e) => `${e.reason} at ${clockText(ctx, e.ms)}`).join('; ')}.`,
      },
    };
  }
  const have = new Set(events.map((e) => e.group));
  const missing: string[] = [];
  if (!have.has('infection')) missing.push('no "infection suspected" mark');
  if (events.filter((e) => e.group === 'sirs').length === 0) missing.push('no SEP-1 SIRS criterion');
  if (!have.has('organ')) missing.push('no organ dysfunction');
  return {
    suggestion: null,
    note: `No severe sepsis presentation found (infection suspected, 2 SIRS criteria and 1 organ dysfunction within 6 h)${missing.length ? `: ${missing.join(', ')}` : ''}.`,
  };
}

function septicShock(
  ws: Worksheet,
  atMs: number,
  baseMs: number,
  baseWords: string,
): { suggestion: TimeZeroSuggestion | null; note?: string } {
  const ctx = makeContext(ws, atMs, baseMs);
  const limit = baseMs + SEP1_WINDOW_MINUTES * MINUTE_MS;
  const candidates: { ms: number; rowIds: string[]; reason: string; criterion: string }[] = [];
  const lactate = evalPredicate(ctx, SEP1_INITIAL_LACTATE_4);
  if (lactate.state === 'yes' && lactate.sinceMs! <= limit) {
    candidates.push({ ms: Math.max(baseMs, lactate.sinceMs!), rowIds: lactate.rowIds, reason: lactate.text, criterion: 'shock:lactate' });
  }
  const hypo = evalPredicate(ctx, SEP1_PERSISTENT_HYPOTENSION);
  if (hypo.state === 'yes' && hypo.sinceMs! <= limit) {
    candidates.push({ ms: Math.max(baseMs, hypo.sinceMs!), rowIds: hypo.rowIds, reason: hypo.text, criterion: 'shock:hypotension' });
  }
  if (candidates.length === 0) {
    return { suggestion: null, note: `No septic shock presentation found within 6 h after ${baseWords}: ${lactate.text}; ${hypo.text}.` };
  }
  candidates.sort((a, b) => a.ms - b.ms);
  const c = candidates[0]!;
  const rows = new Map(ctx.rows.map((r) => [r.row.id, r]));
  const offsetRow = c.rowIds
    .map((id) => rows.get(id))
    .filter((r) => r !== undefined)
    .pop();
  return {
    suggestion: {
      kind: 'septic-shock',
      time: toInstant(c.ms),
      offset: offsetRow?.row.offset ?? ws.displayOffset,
      basis: 'criteria',
      rowIds: c.rowIds,
      criteria: c.rowIds.map((id) => ({
        criterion: c.criterion,
        reason: c.reason,
        rowId: id,
        time: rows.get(id)?.row.time ?? toInstant(c.ms),
      })),
      explanation: `Septic shock presentation (SEP-1) at ${clockText(ctx, c.ms)}: ${c.reason}${c.ms === baseMs ? ` (not earlier than ${baseWords})` : ''}.`,
    },
  };
}

/**
 * Suggested severe sepsis and septic shock presentation times from the rows charted at or before
 * `atMs` (all rows when omitted). Returns suggestions only; it never changes the worksheet.
 */
export function suggestTimeZero(ws: Worksheet, atMs?: number): TimeZeroSuggestions {
  const rows = timedRows(ws);
  const at = atMs ?? (rows.length ? rows[rows.length - 1]!.ms : 0);
  const notes: string[] = [];
  // t0 only sets the display day of explanations here; criteria are read from every row.
  const anchor = ws.timeZero ? Date.parse(ws.timeZero.time) : (rows[0]?.ms ?? at);
  const ctx = makeContext(ws, at, anchor);
  const severe = severeSepsis(ctx);
  if (severe.note) notes.push(severe.note);
  let shock: TimeZeroSuggestion | null = null;
  if (severe.suggestion) {
    const r = septicShock(ws, at, Date.parse(severe.suggestion.time), 'severe sepsis presentation');
    shock = r.suggestion;
    if (r.note) notes.push(r.note);
  } else if (ws.timeZero) {
    const r = septicShock(ws, at, Date.parse(ws.timeZero.time), 'time zero');
    shock = r.suggestion;
    if (r.note) notes.push(r.note);
  } else {
    notes.push('No septic shock suggestion without a severe sepsis presentation or a time zero.');
  }
  notes.push(
    'Not modelled: clinician documentation of severe sepsis or shock, the triage-time rule, signs documented as chronic or due to medication, bands and ventilation.',
  );
  return { severeSepsis: severe.suggestion, septicShock: shock, notes };
}
