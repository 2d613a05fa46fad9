/**
 * JSON backup of one worksheet or the whole notebook: a plain, versioned document
 *
 *   { "format": "tidemark-backup", "version": 1, "exportedAt": ISO, "worksheets": [ Worksheet... ] }
 *
 * where each worksheet is exactly the model's Worksheet, edit log included. Import is strict:
 * every object must have exactly the known keys, and every problem is reported with its path
 * (`worksheets[0].rows[3].time: ...`). Older backup versions are upgraded step by step by
 * `migrateBackup`. Import never replaces a worksheet unless the caller passes the user's choice.
 *
 * Pure module: no DOM, time from the injected clock.
 */
import { z } from 'zod';
import type { Clock } from '../sheet/clock.js';
import { toInstant } from '../sheet/clock.js';
import { Instant, Worksheet } from '../sheet/model.js';
import { MAX_PROBLEMS, formatIssues, formatPath } from './schema.js';
import type { NotebookListing, PutAllResult, Store } from './store.js';

export const BACKUP_FORMAT = 'tidemark-backup';
/** The backup version this code writes. Older versions are read through BACKUP_STEPS. */
export const BACKUP_VERSION = 1;
export const MAX_BACKUP_WORKSHEETS = 10_000;
/** Default limit on the size of a backup file's text (characters). */
export const MAX_BACKUP_CHARS = 100_000_000;

/** Version 1, the current shape. */
export const BackupV1 = z.strictObject({
  format: z.literal(BACKUP_FORMAT),
  version: z.literal(1),
  exportedAt: Instant,
  worksheets: z.array(Worksheet).max(MAX_BACKUP_WORKSHEETS),
});
export type BackupDocument = z.infer<typeof BackupV1>;

/**
 * Version 0, an earlier shape (kept to exercise the migration path): worksheets had no
 * `displayOffset` (times were shown in the time-zero offset) and no `useIdealWeight` (always the
 * actual weight). When the Worksheet model changes, freeze this schema as a copy instead of
 * deriving it.
 */
export const WorksheetV0 = Worksheet.omit({ displayOffset: true, useIdealWeight: true });
export const BackupV0 = z.strictObject({
  format: z.literal(BACKUP_FORMAT),
  version: z.literal(0),
  exportedAt: Instant,
  worksheets: z.array(WorksheetV0).max(MAX_BACKUP_WORKSHEETS),
});

// ---------------------------------------------------------------------------------------------
// Export

/** A backup of the given worksheets (one, or the whole notebook). */
export function createBackup(worksheets: readonly Worksheet[], clock: Clock): BackupDocument {
  return { format: BACKUP_FORMAT, version: BACKUP_VERSION, exportedAt: toInstant(clock.now()), worksheets: [...worksheets] };
}

export function backupToJson(doc: BackupDocument): string {
  return `${JSON.stringify(doc, null, 2)}\n`;
}

/** A file name such as `tidemark-backup-2026-03-01T0815Z.json` (UTC, no characters files dislike). */
export function backupFileName(doc: BackupDocument): string {
  const stamp = doc.exportedAt.slice(0, 16).replace(/:/g, '');
  return `${BACKUP_FORMAT}-${stamp}Z.json`;
}

// ---------------------------------------------------------------------------------------------
// Migration

export type MigrateResult = { ok: true; doc: BackupDocument; fromVersion: number; notes: string[] } | { ok: false; problems: string[] };

/** Upgrades a document validated as version `from` to the shape of version `from + 1`. */
interface BackupStep {
  from: number;
  read(value: unknown, notes: string[]): { ok: true; value: unknown } | { ok: false; problems: string[] };
}

function step<S extends z.ZodType>(from: number, schema: S, up: (doc: z.output<S>, notes: string[]) => unknown): BackupStep {
  return {
    from,
    read(value, notes) {
      const parsed = schema.safeParse(value);
      if (!parsed.success) return { ok: false, problems: formatIssues(parsed.error.issues) };
      return { ok: true, value: up(parsed.data, notes) };
    },
  };
}

/** Steps by the version they read. To add version 2: add `step(1, BackupV1Frozen, up)` here and a BackupV2. */
const BACKUP_STEPS: readonly BackupStep[] = [
  step(0, BackupV0, (doc, notes) => ({
    format: BACKUP_FORMAT,
    version: 1,
    exportedAt: doc.exportedAt,
    worksheets: doc.worksheets.map((ws) => {
      // Version 0 showed times in the time-zero offset, else in the first row's offset.
      const displayOffset = ws.timeZero?.offset ?? ws.rows[0]?.offset ?? 0;
      notes.push(
        `Worksheet "${ws.label}": display offset set to ${formatOffset(displayOffset)} and dosing weight to the actual weight (older backup).`,
      );
      return { ...ws, displayOffset, useIdealWeight: false };
    }),
  })),
];

function formatOffset(minutes: number): string {
  const sign = minutes < 0 ? '-' : '+';
  const abs = Math.abs(minutes);
  return `${sign}${String(Math.floor(abs / 60)).padStart(2, '0')}:${String(abs % 60).padStart(2, '0')}`;
}

function isPlainObject(value: unknown): value is Record<string, unknown> {
  return typeof value === 'object' && value !== null && !Array.isArray(value);
}

/**
 * Reads a parsed backup of any known version and upgrades it to the current one, validating
 * each version with its own schema. Never throws.
 */
export function migrateBackup(value: unknown): MigrateResult {
  if (!isPlainObject(value)) return { ok: false, problems: ['This is not a Tidemark backup (expected a JSON object).'] };
  const format = Object.hasOwn(value, 'format') ? value['format'] : undefined;
  if (format !== BACKUP_FORMAT) {
    return { ok: false, problems: [`format: expected "${BACKUP_FORMAT}"; this file is not a Tidemark backup.`] };
  }
  const version = Object.hasOwn(value, 'version') ? value['version'] : undefined;
  if (typeof version !== 'number' || !Number.isInteger(version) || version < 0) {
    return { ok: false, problems: ['version: expected a whole number'] };
  }
  if (version > BACKUP_VERSION) {
    return {
      ok: false,
      problems: [
        `version: this backup was made by a newer Tidemark (backup version ${version}); this app reads versions up to ${BACKUP_VERSION}.`,
      ],
    };
  }
  const notes: string[] = [];
  let current: unknown = value;
  for (let v = version; v < BACKUP_VERSION; v += 1) {
    const s = BACKUP_STEPS.find((candidate) => candidate.from === v);
    if (!s) return { ok: false, problems: [`version: backup version ${v} is not supported.`] };
    const r = s.read(current, notes);
    if (!r.ok) return r;
    current = r.value;
  }
  const parsed = BackupV1.safeParse(current);
  if (!parsed.success) return { ok: false, problems: formatIssues(parsed.error.issues) };
  return { ok: true, doc: parsed.data, fromVersion: version, notes };
}

// ---------------------------------------------------------------------------------------------
// Reading a file

export type ReadBackupResult = MigrateResult;

/**
 * Finds own `__proto__` keys anywhere in a parsed JSON value. zod drops such keys silently (to
 * protect the prototype); a backup containing one is reported instead. Iterative: deep nesting
 * cannot overflow the stack.
 */
function protoKeyPaths(root: unknown): string[] {
  const found: string[] = [];
  const stack: { value: unknown; path: PropertyKey[] }[] = [{ value: root, path: [] }];
  while (stack.length > 0 && found.length < MAX_PROBLEMS) {
    const { value, path } = stack.pop()!;
    if (Array.isArray(value)) {
      for (let i = value.length - 1; i >= 0; i -= 1) stack.push({ value: value[i], path: [...path, i] });
    } else if (isPlainObject(value)) {
      for (const key of Object.keys(value)) {
        if (key === '__proto__') found.push(`${formatPath([...path, key])}: this key is not allowed`);
        else stack.push({ value: value[key], path: [...path, key] });
      }
    }
  }
  return found;
}

/** Problems the schema cannot see: duplicate ids. Rows out of time order are sorted, with a note. */
function checkDocument(doc: BackupDocument, notes: string[]): { problems: string[]; doc: BackupDocument } {
  const problems: string[] = [];
  const worksheetIds = new Map<string, number>();
  const worksheets = doc.worksheets.map((ws, i) => {
    const first = worksheetIds.get(ws.id);
    if (first !== undefined) problems.push(`worksheets[${i}].id: "${ws.id}" is also the id of worksheets[${first}]`);
    else worksheetIds.set(ws.id, i);
    const rowIds = new Set<string>();
    ws.rows.forEach((row, r) => {
      if (rowIds.has(row.id)) problems.push(`worksheets[${i}].rows[${r}].id: "${row.id}" appears twice`);
      rowIds.add(row.id);
    });
    const entryIds = new Set<string>();
    ws.log.forEach((entry, e) => {
      if (entryIds.has(entry.id)) problems.push(`worksheets[${i}].log[${e}].id: "${entry.id}" appears twice`);
      entryIds.add(entry.id);
    });
    const sorted = ws.rows.every((row, r) => r === 0 || ws.rows[r - 1]!.time <= row.time);
    if (sorted) return ws;
    notes.push(`Worksheet "${ws.label}": rows were not in time order and have been sorted.`);
    const rows = [...ws.rows].sort((a, b) => (a.time < b.time ? -1 : a.time > b.time ? 1 : 0));
    return { ...ws, rows };
  });
  return { problems: problems.slice(0, MAX_PROBLEMS), doc: { ...doc, worksheets } };
}

/** Validates an already parsed JSON value as a backup (any supported version). Never throws. */
export function readBackup(value: unknown): ReadBackupResult {
  try {
    const protoProblems = protoKeyPaths(value);
    if (protoProblems.length > 0) return { ok: false, problems: protoProblems };
    const migrated = migrateBackup(value);
    if (!migrated.ok) return migrated;
    const notes = [...migrated.notes];
    const checked = checkDocument(migrated.doc, notes);
    if (checked.problems.length > 0) return { ok: false, problems: checked.problems };
    return { ok: true, doc: checked.doc, fromVersion: migrated.fromVersion, notes };
  } catch (err) {
    // Defensive: validation should never throw, but a hostile file must not crash the app.
    return { ok: false, problems: [`The backup could not be read: ${err instanceof Error ? err.message : String(err)}`] };
  }
}

/** Parses the text of a backup file. Never throws. */
export function parseBackup(text: string, options: { maxChars?: number } = {}): ReadBackupResult {
  const maxChars = options.maxChars ?? MAX_BACKUP_CHARS;
  if (typeof text !== 'string') return { ok: false, problems: ['The backup must be text.'] };
  if (text.length > maxChars) {
    return { ok: false, problems: [`The file is too large for a backup (${text.length} characters; the limit is ${maxChars}).`] };
  }
  let value: unknown;
  try {
    value = JSON.parse(text);
  } catch (err) {
    return { ok: false, problems: [`The file is not valid JSON: ${err instanceof Error ? err.message : String(err)}`] };
  }
  return readBackup(value);
}

// ---------------------------------------------------------------------------------------------
// Planning an import against the notebook

export type ImportStatus = 'new' | 'clash';
export type ClashChoice = 'import-as-new' | 'replace' | 'skip';

export interface ImportItem {
  /** Position in the backup. */
  index: number;
  id: string;
  label: string;
  rowCount: number;
  updatedAt: string;
  /** `new`: no worksheet with this id here; `clash`: one exists and needs the user's choice. */
  status: ImportStatus;
  /** The worksheet already in the notebook, for a clash (label absent when it is unreadable). */
  existing?: { label?: string; updatedAt?: string; rev?: number; unreadable?: boolean };
}

export interface ImportPlan {
  doc: BackupDocument;
  items: ImportItem[];
}

/** Compares a backup with the notebook: which worksheets are new, which clash. */
export function planImport(doc: BackupDocument, notebook: NotebookListing): ImportPlan {
  const existing = new Map<string, ImportItem['existing']>();
  for (const s of notebook.summaries) existing.set(s.id, { label: s.label, updatedAt: s.updatedAt, rev: s.rev });
  for (const u of notebook.unreadable) existing.set(u.id, { unreadable: true });
  const items = doc.worksheets.map((ws, index): ImportItem => {
    const item: ImportItem = {
      index,
      id: ws.id,
      label: ws.label,
      rowCount: ws.rows.length,
      updatedAt: ws.updatedAt,
      status: existing.has(ws.id) ? 'clash' : 'new',
    };
    const other = existing.get(ws.id);
    if (other) item.existing = other;
    return item;
  });
  return { doc, items };
}

export type ResolveResult =
  | {
      ok: true;
      /** What to write, in backup order (fresh ids for `import-as-new`). */
      worksheets: Worksheet[];
      /** Ids the user chose to replace (pass to `store.putAll` as `replace`). */
      replace: string[];
      skipped: string[];
    }
  | { ok: false; problems: string[] };

/**
 * Applies the user's choices to a plan. Every clash needs an explicit choice (by worksheet id);
 * a new worksheet is imported as it is. `import-as-new` gives the worksheet a fresh id and keeps
 * everything else (rows, log, rev) exactly.
 */
export function resolveImport(
  plan: ImportPlan,
  choices: ReadonlyMap<string, ClashChoice>,
  newId: () => string = () => globalThis.crypto.randomUUID(),
): ResolveResult {
  const problems: string[] = [];
  const worksheets: Worksheet[] = [];
  const replace: string[] = [];
  const skipped: string[] = [];
  for (const item of plan.items) {
    const ws = plan.doc.worksheets[item.index]!;
    const choice = choices.get(item.id);
    if (choice === 'skip') {
      skipped.push(item.id);
      continue;
    }
    if (item.status === 'new') {
      worksheets.push(ws);
      continue;
    }
    if (choice === 'replace') {
      replace.push(item.id);
      worksheets.push(ws);
    } else if (choice === 'import-as-new') {
      worksheets.push({ ...ws, id: newId() });
    } else {
      problems.push(
        `worksheets[${item.index}]: worksheet "${item.label}" (id ${item.id}) is already in this notebook; choose to import it as a new worksheet, replace the one here, or skip it.`,
      );
    }
  }
  if (problems.length > 0) return { ok: false, problems: problems.slice(0, MAX_PROBLEMS) };
  return { ok: true, worksheets, replace, skipped };
}

export type ImportOutcome =
  | { ok: true; result: Extract<PutAllResult, { ok: true }>; skipped: string[]; fromVersion: number; notes: string[] }
  /** The file is not a valid backup. Nothing was written. */
  | { ok: false; reason: 'invalid'; problems: string[] }
  /** Clashes without a choice: ask the user (show `plan`), then call again with choices. Nothing was written. */
  | { ok: false; reason: 'needs-choice'; plan: ImportPlan; problems: string[] }
  /** The store refused or failed (including an id that appeared since the plan). Nothing was written. */
  | { ok: false; reason: 'store'; result: Exclude<PutAllResult, { ok: true }> };

/**
 * Reads a backup file and imports it in one transaction: new worksheets are added, clashes are
 * handled only as `choices` say. Never throws for a bad file; nothing is written unless all of
 * it can be.
 */
export async function importBackup(
  store: Store,
  text: string,
  choices: ReadonlyMap<string, ClashChoice> = new Map(),
  options: { newId?: () => string; maxChars?: number } = {},
): Promise<ImportOutcome> {
  const read = parseBackup(text, options.maxChars === undefined ? {} : { maxChars: options.maxChars });
  if (!read.ok) return { ok: false, reason: 'invalid', problems: read.problems };
  const plan = planImport(read.doc, await store.list());
  const resolved = resolveImport(plan, choices, options.newId);
  if (!resolved.ok) return { ok: false, reason: 'needs-choice', plan, problems: resolved.problems };
  const result = await store.putAll(resolved.worksheets, { replace: resolved.replace });
  if (!result.ok) return { ok: false, reason: 'store', result };
  return { ok: true, result, skipped: resolved.skipped, fromVersion: read.fromVersion, notes: read.notes };
}
