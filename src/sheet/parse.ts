/**
 * Turns what a person types into a cell into a canonical Cell, or a refusal that says what is
 * wrong, the accepted range and the accepted units. Pure.
 */
import type { Cell } from './model.js';
import { measure, unitsOf, type MeasureDef, type UnitDef } from './measures.js';

export type ParseResult =
  { ok: true; cell: Cell | null; /** Set when the value was kept but is alarming. */ warning?: string } | { ok: false; error: string };

/** Formats a canonical number the way the measure displays it. */
export function formatNumber(def: MeasureDef, value: number, unit?: UnitDef): string {
  const u = unit ?? def.unit;
  const v = u && u !== def.unit ? u.fromCanonical(value) : value;
  const decimals = u && u !== def.unit ? Math.max(def.decimals ?? 1, 1) : (def.decimals ?? 1);
  const rounded = Number(v.toFixed(decimals));
  return String(rounded);
}

/** "20–300 mmHg" style text for the accepted range, in the canonical unit. */
export function rangeText(def: MeasureDef): string {
  if (!def.range || !def.unit) return '';
  const [lo, hi] = def.range;
  const label = def.unit.label ? ` ${def.unit.label}` : '';
  return `${formatNumber(def, lo)}–${formatNumber(def, hi)}${label}`;
}

/** "mmHg or kPa" style list of accepted unit labels. */
export function unitsText(def: MeasureDef): string {
  const labels = unitsOf(def)
    .map((u) => u.label)
    .filter((l) => l.length > 0);
  return [...new Set(labels)].join(' or ');
}

const NUMBER_AND_UNIT = /^([+-]?(?:\d+(?:[.,]\d*)?|[.,]\d+))\s*(.*)$/;

function findUnit(def: MeasureDef, typed: string): UnitDef | undefined {
  const t = typed.toLowerCase().replace(/\s+/g, '');
  for (const u of unitsOf(def)) {
    if (u.aliases.some((a) => a.replace(/\s+/g, '') === t)) return u;
    if (u.label && u.label.toLowerCase().replace(/\s+/g, '') === t) return u;
  }
  return undefined;
}

/**
 * Parses typed text for a measure. Empty text clears the cell (`cell: null`).
 * @param key measure key from the catalog
 * @param text what the person typed
 */
export function parseCellInput(key: string, text: string): ParseResult {
  const def = measure(key);
  const raw = text.trim();
  if (raw === '') return { ok: true, cell: null };

  if (def.kind === 'text') {
    if (raw.length > 2000) return { ok: false, error: `${def.label}: at most 2000 characters.` };
    return { ok: true, cell: { value: raw } };
  }
  if (def.kind === 'mark') {
    if (raw.length > 500) return { ok: false, error: `${def.label}: at most 500 characters.` };
    const plain = /^(yes|y|x|✓|done|1|true)$/i.test(raw);
    return { ok: true, cell: plain ? { value: true } : { value: true, text: raw } };
  }

  const m = NUMBER_AND_UNIT.exec(raw);
  const range = rangeText(def);
  const units = unitsText(def);
  const expect = `${def.label} takes a number${units ? ` in ${units}` : ''}${range ? ` (${range})` : ''}.`;
  if (!m) return { ok: false, error: `"${raw}" is not a number. ${expect}` };
  const num = Number(m[1]!.replace(',', '.'));
  if (!Number.isFinite(num)) return { ok: false, error: `"${raw}" is not a number. ${expect}` };
  const typedUnit = (m[2] ?? '').trim();
  let u: UnitDef | undefined;
  if (typedUnit === '') {
    u = def.bareUnit ? def.bareUnit(num) : def.unit;
  } else {
    u = findUnit(def, typedUnit);
    if (!u) return { ok: false, error: `Unknown unit "${typedUnit}" for ${def.label}. ${expect}` };
  }
  if (!u) return { ok: false, error: expect };
  const value = u.toCanonical(num);
  const rounded = Number(value.toPrecision(12));
  if (def.range) {
    const [lo, hi] = def.range;
    if (rounded < lo || rounded > hi) {
      const shown = u === def.unit ? raw : `${raw} = ${formatNumber(def, rounded)} ${def.unit?.label ?? ''}`.trim();
      return { ok: false, error: `${shown} is outside the accepted range for ${def.label}: ${range}. Not stored.` };
    }
  }
  const cell: Cell = { value: rounded };
  // Keep what was typed when a unit was given or the number was read in another unit.
  if (typedUnit !== '' || u !== def.unit) cell.input = raw;
  let warning: string | undefined;
  if (def.alarm) {
    if (def.alarm.low !== undefined && rounded < def.alarm.low) {
      cell.flag = 'low';
      warning = `${def.label} ${formatNumber(def, rounded)} ${def.unit?.label ?? ''} is below ${def.alarm.low}: kept and flagged.`.replace(
        /\s+:/,
        ':',
      );
    } else if (def.alarm.high !== undefined && rounded > def.alarm.high) {
      cell.flag = 'high';
      warning = `${def.label} ${formatNumber(def, rounded)} ${def.unit?.label ?? ''} is above ${def.alarm.high}: kept and flagged.`.replace(
        /\s+:/,
        ':',
      );
    }
  }
  return warning ? { ok: true, cell, warning } : { ok: true, cell };
}

/** Shows a stored cell as text for the grid (canonical unit unless `unit` is given). */
export function formatCell(key: string, cell: Cell | undefined, unit?: UnitDef): string {
  if (!cell) return '';
  const def = measure(key);
  if (cell.value === true) return cell.text ? `✓ ${cell.text}` : '✓';
  if (typeof cell.value === 'string') return cell.value;
  return formatNumber(def, cell.value, unit);
}
