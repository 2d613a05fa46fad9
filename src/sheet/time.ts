/**
 * Times as people type and read them: ISO 8601 with an offset, or a bedside "08:15" on the
 * worksheet's day in its own offset. Stored as a UTC instant plus the entered offset.
 * Durations are exact milliseconds between instants, so daylight-saving changes cannot bend them.
 */
import { MINUTE_MS } from './clock.js';

export interface ParsedTime {
  /** UTC instant, ISO. */
  time: string;
  /** Offset in minutes the time was entered with. */
  offset: number;
}

export type TimeResult = ({ ok: true } & ParsedTime) | { ok: false; error: string };

const ISO = /^(\d{4})-(\d{2})-(\d{2})[T ](\d{2}):(\d{2})(?::(\d{2})(?:\.(\d{1,3})\d*)?)?\s*(Z|[+-]\d{2}:?\d{2})?$/i;
const CLOCK = /^(\d{1,2}):?(\d{2})$/;

/** "+01:00" -> 60; "Z" -> 0. */
export function parseOffset(text: string): number | undefined {
  if (/^z$/i.test(text)) return 0;
  const m = /^([+-])(\d{2}):?(\d{2})$/.exec(text);
  if (!m) return undefined;
  const mins = Number(m[2]) * 60 + Number(m[3]);
  if (Number(m[2]) > 14 || Number(m[3]) > 59) return undefined;
  return m[1] === '-' ? -mins : mins;
}

/** 60 -> "+01:00". */
export function formatOffset(offset: number): string {
  const sign = offset < 0 ? '-' : '+';
  const a = Math.abs(offset);
  return `${sign}${String(Math.floor(a / 60)).padStart(2, '0')}:${String(a % 60).padStart(2, '0')}`;
}

function pad(n: number, w = 2): string {
  return String(n).padStart(w, '0');
}

/**
 * Parses a time typed by a person.
 * @param text ISO 8601 ("2026-03-01T08:15+01:00", "2026-03-01 08:15") or a clock time ("08:15", "0815")
 * @param offset offset to assume when none is typed (the worksheet's display offset)
 * @param referenceMs for a bare clock time: the instant whose local day (in `offset`) is meant;
 *   a clock time more than 12 h after the reference is read as the previous day.
 */
export function parseTimeInput(text: string, offset: number, referenceMs?: number): TimeResult {
  const raw = text.trim();
  if (raw === '') return { ok: false, error: 'Type a time, e.g. 08:15 or 2026-03-01T08:15+01:00.' };
  const iso = ISO.exec(raw);
  if (iso) {
    const [, y, mo, d, h, mi, s, ms, off] = iso;
    const o = off === undefined ? offset : parseOffset(off);
    if (o === undefined) return { ok: false, error: `"${off ?? ''}" is not a time zone offset; write it as +01:00 or Z.` };
    const Y = Number(y),
      M = Number(mo),
      D = Number(d),
      H = Number(h),
      MI = Number(mi),
      S = Number(s ?? 0);
    if (M < 1 || M > 12 || D < 1 || D > 31 || H > 23 || MI > 59 || S > 59) {
      return { ok: false, error: `"${raw}" is not a valid date and time.` };
    }
    const local = Date.UTC(Y, M - 1, D, H, MI, S, Number((ms ?? '0').padEnd(3, '0')));
    const check = new Date(local);
    if (check.getUTCDate() !== D) return { ok: false, error: `"${raw}" is not a valid date.` };
    return { ok: true, time: new Date(local - o * MINUTE_MS).toISOString(), offset: o };
  }
  const c = CLOCK.exec(raw);
  if (c && referenceMs !== undefined) {
    const H = Number(c[1]),
      MI = Number(c[2]);
    if (H > 23 || MI > 59) return { ok: false, error: `"${raw}" is not a clock time (00:00–23:59).` };
    const refLocal = new Date(referenceMs + offset * MINUTE_MS);
    let local = Date.UTC(refLocal.getUTCFullYear(), refLocal.getUTCMonth(), refLocal.getUTCDate(), H, MI);
    let utc = local - offset * MINUTE_MS;
    if (utc - referenceMs > 12 * 60 * MINUTE_MS) {
      local -= 24 * 60 * MINUTE_MS;
      utc = local - offset * MINUTE_MS;
    }
    return { ok: true, time: new Date(utc).toISOString(), offset };
  }
  return { ok: false, error: `"${raw}" is not a time. Type 08:15, or a date and time such as 2026-03-01T08:15+01:00.` };
}

/** Local wall-clock parts of an instant in an offset. */
function localParts(iso: string, offset: number): Date {
  return new Date(new Date(iso).getTime() + offset * MINUTE_MS);
}

/** "2026-03-01 08:15" in the given offset. */
export function formatDateTime(iso: string, offset: number): string {
  const d = localParts(iso, offset);
  return `${d.getUTCFullYear()}-${pad(d.getUTCMonth() + 1)}-${pad(d.getUTCDate())} ${pad(d.getUTCHours())}:${pad(d.getUTCMinutes())}`;
}

/** "08:15" in the given offset. */
export function formatClock(iso: string, offset: number): string {
  const d = localParts(iso, offset);
  return `${pad(d.getUTCHours())}:${pad(d.getUTCMinutes())}`;
}

/** ISO 8601 with the offset written out: "2026-03-01T08:15:00+01:00". */
export function formatIsoWithOffset(iso: string, offset: number): string {
  const d = localParts(iso, offset);
  return `${d.getUTCFullYear()}-${pad(d.getUTCMonth() + 1)}-${pad(d.getUTCDate())}T${pad(d.getUTCHours())}:${pad(d.getUTCMinutes())}:${pad(d.getUTCSeconds())}${formatOffset(offset)}`;
}

/**
 * A duration for people: "2 h 14 min", "45 min", "3 d 2 h". Seconds shown when asked (for the
 * last minutes before a deadline): "8 min 05 s".
 */
export function formatDuration(ms: number, withSeconds = false): string {
  const neg = ms < 0;
  let s = Math.floor(Math.abs(ms) / 1000);
  const d = Math.floor(s / 86400);
  s -= d * 86400;
  const h = Math.floor(s / 3600);
  s -= h * 3600;
  const m = Math.floor(s / 60);
  s -= m * 60;
  const parts: string[] = [];
  if (d) parts.push(`${d} d`);
  if (h || d) parts.push(`${h} h`);
  if (!d) parts.push(`${m} min`);
  if (withSeconds && !d && !h) parts.push(`${pad(s)} s`);
  return (neg ? '−' : '') + parts.join(' ');
}
