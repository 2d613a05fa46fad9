/**
 * Worksheet model: the zod schemas here are the single source of the stored types.
 *
 * A notebook holds worksheets, one per patient episode. A worksheet holds rows; each row is a
 * moment (UTC instant plus the offset it was entered with) and the interval that ends at it.
 * Every change is recorded in the worksheet's edit log; nothing is silently overwritten.
 *
 * Pure module: no DOM, no wall clock.
 */
import { z } from 'zod';

/** Measure keys are lower-case identifiers such as `map`, `lactate`, `uo_ml`. */
export const MeasureKey = z.string().regex(/^[a-z][a-z0-9_]{0,39}$/, 'a measure key is lower-case letters, digits and _');
export type MeasureKey = z.infer<typeof MeasureKey>;

/** An ISO 8601 instant in UTC, as stored (`2026-03-01T08:15:00.000Z`). */
export const Instant = z.iso.datetime({ offset: false });
export type Instant = z.infer<typeof Instant>;

/** Offset from UTC in minutes, as typed by the user (`+01:00` is 60). */
export const OffsetMinutes = z
  .number()
  .int()
  .min(-14 * 60)
  .max(14 * 60);

/**
 * One cell's value in canonical units.
 * - number measures: `value` is a finite number in the measure's canonical unit;
 * - mark measures (cultures drawn, infection suspected...): `value` is `true`, `text` optional;
 * - text measures (antibiotic name, note): `value` is the text.
 * `input` keeps what the person typed when it differs from the canonical value (e.g. "36 mg/dL").
 */
export const Cell = z.strictObject({
  value: z.union([z.number().refine(Number.isFinite, 'not a finite number'), z.string().max(2000), z.literal(true)]),
  text: z.string().max(500).optional(),
  input: z.string().max(2000).optional(),
  /** Set when the value was kept although it is alarming (outside the expected band). */
  flag: z.enum(['low', 'high']).optional(),
});
export type Cell = z.infer<typeof Cell>;

export const RowId = z.string().min(1).max(64);

export const Row = z.strictObject({
  id: RowId,
  /** The moment this row describes, UTC. */
  time: Instant,
  /** The offset the time was entered with, used to display it back. */
  offset: OffsetMinutes,
  cells: z.record(MeasureKey, Cell),
});
export type Row = z.infer<typeof Row>;

export const TimeZeroBasis = z.enum(['triage', 'recognition', 'criteria', 'other']);
export type TimeZeroBasis = z.infer<typeof TimeZeroBasis>;

export const TimeZero = z
  .strictObject({
    time: Instant,
    offset: OffsetMinutes,
    basis: TimeZeroBasis,
    /** Free text, required when basis is `other`. */
    reason: z.string().max(500).optional(),
  })
  .refine((t) => t.basis !== 'other' || (t.reason ?? '').trim().length > 0, {
    error: 'say why time zero was chosen when its basis is "other"',
    path: ['reason'],
  });
export type TimeZero = z.infer<typeof TimeZero>;

export const Sex = z.enum(['female', 'male']);
export type Sex = z.infer<typeof Sex>;

/** A user-defined derived column: a mathjs expression over measure keys. */
export const DerivedColumn = z.strictObject({
  key: MeasureKey,
  label: z.string().min(1).max(80),
  expression: z.string().min(1).max(500),
  unit: z.string().max(40).optional(),
});
export type DerivedColumn = z.infer<typeof DerivedColumn>;

/** A user-defined goal: applies when `condition` holds, satisfied when `target` holds. */
export const CustomGoal = z.strictObject({
  id: z.string().regex(/^[a-z][a-z0-9-]{0,39}$/, 'a goal id is lower-case letters, digits and -'),
  label: z.string().min(1).max(120),
  condition: z.string().max(500).optional(),
  target: z.string().min(1).max(500),
  /** Minutes from time zero by which the target should first be met; absent for a standing target. */
  deadlineMinutes: z
    .number()
    .int()
    .min(0)
    .max(7 * 24 * 60)
    .optional(),
});
export type CustomGoal = z.infer<typeof CustomGoal>;

export const EditKind = z.enum(['cell', 'row-add', 'row-delete', 'row-time', 'facts', 'columns', 'import']);
export type EditKind = z.infer<typeof EditKind>;

/** One entry of the edit log: what changed, from what, to what, and when it was entered. */
export const EditLogEntry = z.strictObject({
  id: z.string().min(1).max(64),
  /** When the entry was made (wall clock of the device, from the injected clock). */
  at: Instant,
  kind: EditKind,
  rowId: RowId.optional(),
  key: z.string().max(64).optional(),
  /** Previous and new value: a Cell for cell edits, a row time for row-time, JSON text for facts. */
  old: z.union([Cell, z.string(), z.null()]).optional(),
  new: z.union([Cell, z.string(), z.null()]).optional(),
  /** Free text: why (for corrections), or a conflict note. */
  note: z.string().max(500).optional(),
});
export type EditLogEntry = z.infer<typeof EditLogEntry>;

export const WorksheetId = z.string().min(1).max(64);

export const Worksheet = z.strictObject({
  id: WorksheetId,
  /** Bed or case code. The app tells users not to type names or record numbers here. */
  label: z.string().trim().min(1, 'give the worksheet a bed or case code').max(60),
  createdAt: Instant,
  updatedAt: Instant,
  /** Incremented on every stored change; used to detect edits from another tab. */
  rev: z.number().int().min(0),
  archived: z.boolean(),
  weightKg: z.number().min(1).max(400).optional(),
  heightCm: z.number().min(40).max(250).optional(),
  sex: Sex.optional(),
  baselineSbp: z.number().min(40).max(300).optional(),
  /** Use Devine ideal body weight as the dosing weight for per-kg fluid goals (SEP-1 allows it for obesity). */
  useIdealWeight: z.boolean(),
  timeZero: TimeZero.optional(),
  /** Septic shock presentation time when set by the user (for shock-only goals). */
  shockTime: Instant.optional(),
  /** Offset used to display times of this worksheet. */
  displayOffset: OffsetMinutes,
  goalSets: z.array(z.string().max(40)).max(20),
  customGoals: z.array(CustomGoal).max(50),
  derivedColumns: z.array(DerivedColumn).max(50),
  /** Visible columns, in order, by measure key (measured or derived). */
  columns: z.array(z.string().max(64)).max(200),
  rows: z.array(Row).max(100_000),
  log: z.array(EditLogEntry).max(1_000_000),
  /** True for the invented demo worksheet. */
  demo: z.boolean().optional(),
});
export type Worksheet = z.infer<typeof Worksheet>;
