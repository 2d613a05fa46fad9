/**
 * The IndexedDB layout of a notebook and the steps that build it, version by version.
 *
 * Stores (current version 2):
 * - `worksheets`: the current version of each worksheet WITHOUT its edit log (key `id`), plus
 *   `logCount`, the number of log entries it has. Each edit rewrites this record, so it must not
 *   grow with the history.
 * - `log`: the edit log, one record per entry, key `[worksheetId, seq]` where `seq` is the entry's
 *   position in the worksheet's log (0, 1, 2...). Index `by-worksheet`. Keys sort by seq, so a
 *   worksheet's log reads back in order.
 * - `summaries`: what the notebook list shows (label, rows, time zero...), key `id`, index
 *   `by-updated` (v2). The list never loads rows.
 * - `meta`: small settings, out-of-line string keys.
 *
 * Upgrade rules (see reference/reliability-security-performance.md §1.7): steps are cumulative
 * (`oldVersion < N`), run inside the upgrade transaction, await nothing but IndexedDB requests,
 * and a step that fails aborts the whole upgrade so the database stays at its old version with
 * its data intact. A step must read old records through the shape of ITS era: when the stored
 * shape changes, freeze the old schema next to the step that reads it.
 *
 * Pure module: no DOM. Record schemas are derived from the model's zod schemas.
 */
import { z } from 'zod';
import type { DBSchema, IDBPDatabase, IDBPTransaction } from 'idb';
import { EditLogEntry, Worksheet, WorksheetId } from '../sheet/model.js';

export const DEFAULT_DB_NAME = 'tidemark';

/** A worksheet as stored in `worksheets`: everything but the log, plus the log's length. */
export const StoredWorksheet = Worksheet.omit({ log: true }).extend({
  logCount: z.number().int().min(0),
});
export type StoredWorksheet = z.infer<typeof StoredWorksheet>;

/** One edit-log entry as stored in `log`. */
export const StoredLogEntry = z.strictObject({
  worksheetId: WorksheetId,
  seq: z.number().int().min(0),
  entry: EditLogEntry,
});
export type StoredLogEntry = z.infer<typeof StoredLogEntry>;

/** What the notebook list needs of a worksheet, kept in `summaries`. */
export const WorksheetSummary = Worksheet.pick({
  id: true,
  label: true,
  archived: true,
  createdAt: true,
  updatedAt: true,
  rev: true,
  timeZero: true,
  demo: true,
}).extend({
  rowCount: z.number().int().min(0),
});
export type WorksheetSummary = z.infer<typeof WorksheetSummary>;

type SummarySource = Pick<Worksheet, 'id' | 'label' | 'archived' | 'createdAt' | 'updatedAt' | 'rev' | 'timeZero' | 'demo' | 'rows'>;

export function summaryOf(ws: SummarySource): WorksheetSummary {
  const s: WorksheetSummary = {
    id: ws.id,
    label: ws.label,
    archived: ws.archived,
    createdAt: ws.createdAt,
    updatedAt: ws.updatedAt,
    rev: ws.rev,
    rowCount: ws.rows.length,
  };
  if (ws.timeZero !== undefined) s.timeZero = ws.timeZero;
  if (ws.demo !== undefined) s.demo = ws.demo;
  return s;
}

/** Splits a worksheet into its stored record (without log). */
export function toStoredWorksheet(ws: Worksheet): StoredWorksheet {
  const { log, ...rest } = ws;
  return { ...rest, logCount: log.length };
}

export interface TidemarkDB extends DBSchema {
  worksheets: { key: string; value: StoredWorksheet };
  log: { key: [string, number]; value: StoredLogEntry; indexes: { 'by-worksheet': string } };
  summaries: { key: string; value: WorksheetSummary; indexes: { 'by-updated': string } };
  meta: { key: string; value: unknown };
}

export type StoreName = 'worksheets' | 'log' | 'summaries' | 'meta';

/** One schema step. `run` may be async but must await only IndexedDB requests. */
export interface Migration {
  version: number;
  description: string;
  run(db: IDBPDatabase<unknown>, tx: IDBPTransaction<unknown, string[], 'versionchange'>): void | Promise<void>;
}

export const MIGRATIONS: readonly Migration[] = [
  {
    version: 1,
    description: 'worksheets (current version, without log), edit log entries, meta',
    run(db) {
      db.createObjectStore('worksheets', { keyPath: 'id' });
      const log = db.createObjectStore('log', { keyPath: ['worksheetId', 'seq'] });
      log.createIndex('by-worksheet', 'worksheetId');
      db.createObjectStore('meta');
    },
  },
  {
    version: 2,
    description: 'worksheet summaries, so the notebook list does not load every row',
    async run(db, tx) {
      const summaries = db.createObjectStore('summaries', { keyPath: 'id' });
      summaries.createIndex('by-updated', 'updatedAt');
      const writes: Promise<unknown>[] = [];
      let cursor = await tx.objectStore('worksheets').openCursor();
      while (cursor) {
        const summary = summaryFromV1Record(cursor.value);
        // An unreadable v1 record gets no summary; the list reports it as unreadable (it is not
        // deleted, and it does not block the upgrade of everything else).
        if (summary) writes.push(issued(summaries.put(summary)));
        cursor = await cursor.continue();
      }
      await Promise.all(writes);
    },
  },
];

function issued<T>(request: Promise<T>): Promise<T> {
  request.catch(() => undefined);
  return request;
}

/** Reads the summary fields of a version-1 worksheet record (the v1 shape is the current one). */
function summaryFromV1Record(value: unknown): WorksheetSummary | undefined {
  const parsed = StoredWorksheet.safeParse(value);
  return parsed.success ? summaryOf(parsed.data) : undefined;
}

export const DB_VERSION = MIGRATIONS[MIGRATIONS.length - 1]!.version;

/**
 * Formats a zod issue path as `worksheets[0].rows[3].time`; keys that are not plain identifiers
 * are quoted (`cells["bad key"]`).
 */
export function formatPath(path: readonly PropertyKey[]): string {
  let out = '';
  for (const part of path) {
    if (typeof part === 'number') out += `[${part}]`;
    else if (typeof part === 'string' && /^[A-Za-z_$][\w$]*$/.test(part)) out += out ? `.${part}` : part;
    else out += `[${JSON.stringify(String(part).slice(0, 60))}]`;
  }
  return out;
}

export const MAX_PROBLEMS = 50;

/** One line per issue, `path: message`, at most MAX_PROBLEMS lines plus a count of the rest. */
export function formatIssues(issues: readonly z.core.$ZodIssue[], prefix: readonly PropertyKey[] = []): string[] {
  const lines = issues.slice(0, MAX_PROBLEMS).map((issue) => {
    const path = formatPath([...prefix, ...issue.path]);
    return path ? `${path}: ${issue.message}` : issue.message;
  });
  if (issues.length > MAX_PROBLEMS) lines.push(`...and ${issues.length - MAX_PROBLEMS} more problems`);
  return lines;
}
