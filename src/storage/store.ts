/**
 * The notebook store: a small typed facade over IndexedDB (through idb).
 *
 * What "saved" means: a write method resolves `{ ok: true }` only after the transaction's
 * `complete` event (`tx.done`). Expected failures (another tab changed the worksheet, storage
 * full, the connection was closed for a newer version) come back as results, never as thrown
 * errors; the previously stored version stays intact because each write is one transaction.
 *
 * Multi-tab: `commit` reads the stored `rev` and writes in ONE readwrite transaction, which
 * IndexedDB serialises across tabs, so a stale edit is reported as a conflict instead of
 * overwriting (reference §2). Other tabs learn of changes through BroadcastChannel notices
 * (a hint to re-read, not a log).
 *
 * Transaction lifetime: between opening a transaction and `tx.done`, nothing but IndexedDB
 * requests is awaited (reference §1.7). Validation and encoding happen before the transaction.
 *
 * Sealed records (the optional notebook lock, src/storage/lock.ts): with a `RecordCodec` set, every
 * worksheet record, summary and log entry is sealed before its transaction opens and opened after
 * its transaction ends (WebCrypto is asynchronous and must never be awaited inside one). Only the
 * fields the store itself needs stay readable (`CLEAR_FIELDS`). Each write transaction also reads
 * the `lock` meta record and refuses to write when its key id is not this connection's, so a tab
 * that missed a lock change can never write plain data into a locked notebook (or the reverse).
 *
 * No DOM: IndexedDB, BroadcastChannel and navigator.storage are reached through guarded globals
 * or injected, so Node tests (fake-indexeddb) and the browser share this module. In Node, load
 * `fake-indexeddb/auto` first: idb checks the IDB* classes on globalThis.
 */
import { wrap } from 'idb';
import type { IDBPDatabase, IDBPTransaction } from 'idb';
import { z } from 'zod';
import { Worksheet } from '../sheet/model.js';
import type { Change } from '../sheet/worksheet.js';
import {
  DB_VERSION,
  DEFAULT_DB_NAME,
  MIGRATIONS,
  StoredLogEntry,
  StoredWorksheet,
  WorksheetSummary,
  formatIssues,
  summaryOf,
  toStoredWorksheet,
} from './schema.js';
import type { Migration, StoreName, TidemarkDB } from './schema.js';

export { DB_VERSION, DEFAULT_DB_NAME, WorksheetSummary };

// ---------------------------------------------------------------------------------------------
// Results and errors

/** A write that did not happen; nothing of it was stored. */
export type WriteFailure =
  /** The device (or browser quota) is out of space. Export a backup, free space, retry. */
  | { ok: false; reason: 'quota'; message: string }
  /** This connection is closed (a newer version opened in another tab, or the browser closed it). */
  | { ok: false; reason: 'closed'; message: string }
  /** The data given is not a valid worksheet or change: a programming error, with the problems. */
  | { ok: false; reason: 'invalid'; message: string; problems: string[] }
  /** Any other storage failure (I/O error, aborted transaction, unreadable stored record). */
  | { ok: false; reason: 'failed'; message: string };

export type CommitResult =
  | { ok: true; worksheet: Worksheet }
  /** Another tab stored rev `current.rev` since this edit started: re-apply on top of `current`. */
  | { ok: false; reason: 'conflict'; message: string; current: Worksheet }
  /** The worksheet is not in the store (removed in another tab). */
  | { ok: false; reason: 'missing'; message: string }
  | WriteFailure;

export type CreateResult = { ok: true; worksheet: Worksheet } | { ok: false; reason: 'exists'; message: string } | WriteFailure;

export type RemoveResult = { ok: true; removed: boolean } | WriteFailure;

export type PutAllResult =
  /** `worksheets` as written (a replaced worksheet gets a rev above the one it replaced). */
  | { ok: true; worksheets: Worksheet[]; added: string[]; replaced: string[] }
  /** Some ids exist and were not allowed to be replaced; nothing was written. */
  | { ok: false; reason: 'exists'; message: string; ids: string[] }
  | WriteFailure;

export type MetaResult = { ok: true } | WriteFailure;

/** A worksheet the store holds but cannot read (corrupt or from an unknown shape). */
export interface Unreadable {
  id: string;
  message: string;
}

/** The notebook list, newest change first, without rows. */
export interface NotebookListing {
  summaries: WorksheetSummary[];
  unreadable: Unreadable[];
}

/** Notice sent to other tabs after a write has committed. */
export const ChangeNotice = z.discriminatedUnion('type', [
  z.strictObject({ type: z.literal('changed'), id: z.string(), rev: z.number().int() }),
  z.strictObject({ type: z.literal('removed'), id: z.string() }),
]);
export type ChangeNotice = z.infer<typeof ChangeNotice>;

export type StoreErrorKind =
  /** No IndexedDB in this environment. */
  | 'unsupported'
  /** A schema step failed; the upgrade was rolled back and the old data is intact. */
  | 'upgrade-failed'
  /** The database was made by a newer version of the app (close this tab or update). */
  | 'newer-version'
  /** The connection is closed. */
  | 'closed'
  /** A stored record does not match the expected shape. */
  | 'corrupt'
  /** The notebook is locked: its records are sealed and this tab has not been given the key. */
  | 'locked'
  | 'failed';

/** Thrown by `openStore` and by reads (`get`, `getAll`, `list`, `getMeta`). */
export class StoreError extends Error {
  override readonly name = 'StoreError';
  constructor(
    readonly kind: StoreErrorKind,
    message: string,
    /** For `corrupt`: one line per problem, `path: message`. */
    readonly problems: readonly string[] = [],
  ) {
    super(message);
  }
}

// ---------------------------------------------------------------------------------------------
// Sealed records (the optional notebook lock)

/** The meta key of the notebook lock record (its shape is defined in lock.ts). */
export const LOCK_META_KEY = 'lock';

/** Fields that stay readable in a sealed record: keys, index fields and what a commit checks. */
export const CLEAR_FIELDS = {
  worksheets: ['id', 'rev', 'logCount'],
  summaries: ['id', 'rev', 'updatedAt'],
  log: ['worksheetId', 'seq'],
} as const;

export type SealedStore = keyof typeof CLEAR_FIELDS;

/** Seals and opens records (implemented with AES-GCM in lock.ts). */
export interface RecordCodec {
  /** Identifies the key; equals the `keyId` of the lock meta record it belongs to. */
  readonly keyId: string;
  /** The record with everything but CLEAR_FIELDS[store] sealed in a `sealed` field. */
  seal(store: SealedStore, plain: Record<string, unknown>): Promise<Record<string, unknown>>;
  /** The plain record; throws StoreError ('locked' for another key, 'corrupt' if it fails to open). */
  open(store: SealedStore, sealed: Record<string, unknown>): Promise<Record<string, unknown>>;
}

/** True for a record written through a codec. */
export function isSealed(value: unknown): value is Record<string, unknown> & { sealed: object } {
  return (
    typeof value === 'object' &&
    value !== null &&
    typeof (value as { sealed?: unknown }).sealed === 'object' &&
    (value as { sealed?: unknown }).sealed !== null
  );
}

/** The key id a lock meta record names (undefined: the notebook is not locked). */
export function lockKeyId(value: unknown): string | undefined {
  if (typeof value !== 'object' || value === null) return undefined;
  const id = (value as { keyId?: unknown }).keyId;
  return typeof id === 'string' ? id : undefined;
}

// ---------------------------------------------------------------------------------------------
// Options and the Store interface

export interface VersionInfo {
  /** The version this connection (or the database) has. */
  currentVersion: number;
  /** The version being asked for; null when the database is being deleted. */
  requestedVersion: number | null;
}

export interface OpenStoreOptions {
  /** Database name; also the BroadcastChannel name. Default `tidemark`. */
  name?: string;
  /**
   * This tab wants to upgrade but another tab keeps an older version open. The open waits until
   * that tab closes: tell the user to close or reload the other tabs.
   */
  onBlocked?: (info: VersionInfo) => void;
  /**
   * Another tab opens a newer version (or deletes the database). The store closes this connection
   * right after this callback (writes already started still complete); every later call returns
   * `closed`. Tell the user to reload.
   */
  onVersionChange?: (info: VersionInfo) => void;
  /** The browser closed the connection abnormally (storage cleared, I/O error). */
  onClosed?: () => void;
  /** Default: globalThis.indexedDB. */
  idbFactory?: IDBFactory;
  /** Send and receive change notices between tabs (default: when BroadcastChannel exists). */
  broadcast?: boolean;
  /** For tests only: the schema steps (default MIGRATIONS). */
  migrations?: readonly Migration[];
}

export interface PutAllOptions {
  /**
   * Which existing worksheets may be overwritten: `false` none (any existing id fails the whole
   * call, nothing written), `true` all, or the list of ids the user chose to replace.
   */
  replace: boolean | readonly string[];
}

export interface Store {
  readonly name: string;
  /** Database version of this connection. */
  readonly version: number;
  /** False once closed (by `close`, a newer version in another tab, or the browser). */
  isOpen(): boolean;
  /** Every worksheet's summary, newest change first, and any record that cannot be read. */
  list(): Promise<NotebookListing>;
  /** The stored worksheet with its edit log, validated; undefined if absent. Throws StoreError('corrupt'). */
  get(id: string): Promise<Worksheet | undefined>;
  /** Every worksheet with its log, from one consistent snapshot (for a full backup). */
  getAll(): Promise<{ worksheets: Worksheet[]; unreadable: Unreadable[] }>;
  /** Stores a new worksheet (with any log it already has). Fails with `exists` if the id is taken. */
  create(ws: Worksheet): Promise<CreateResult>;
  /**
   * Stores the result of a command on a worksheet whose stored rev was `expectedRev`: the new
   * version and the change's log entries, in one transaction.
   */
  commit(change: Change, expectedRev: number): Promise<CommitResult>;
  /** Deletes a worksheet, its summary and its log. */
  remove(id: string): Promise<RemoveResult>;
  /** Bulk write for imports, one transaction with durability 'strict'. */
  putAll(worksheets: readonly Worksheet[], options: PutAllOptions): Promise<PutAllResult>;
  getMeta(key: string): Promise<unknown>;
  setMeta(key: string, value: unknown): Promise<MetaResult>;
  /** Notices from other tabs; returns an unsubscribe function. */
  onExternalChange(callback: (notice: ChangeNotice) => void): () => void;
  /**
   * Gives this connection the key of a locked notebook (after the passphrase was checked), or
   * takes it away (`undefined`: the notebook locks; reads then throw `locked`, writes fail).
   */
  setCodec(codec: RecordCodec | undefined): void;
  /** Key id of the codec in use, if any. */
  readonly keyId: string | undefined;
  /**
   * Rewrites every worksheet, summary and log entry sealed with `next` (or plain when undefined)
   * and stores `lock` as the lock meta record (deleted when undefined), all in ONE transaction
   * with durability 'strict'. Retries when another tab writes in between; the old records stay
   * intact if anything fails. Then this connection uses `next`.
   */
  reseal(next: RecordCodec | undefined, lock: unknown): Promise<MetaResult>;
  /** Closes the connection and the channel. Idempotent. */
  close(): void;
}

// ---------------------------------------------------------------------------------------------
// Opening

type DB = IDBPDatabase<TidemarkDB>;

function errorName(err: unknown): string {
  if (typeof err === 'object' && err !== null && 'name' in err) return String(err.name);
  return '';
}

function errorMessage(err: unknown): string {
  if (typeof err === 'object' && err !== null && 'message' in err) return String(err.message);
  return String(err);
}

/**
 * Opens (creating or upgrading) the notebook database. Rejects with StoreError:
 * `unsupported`, `upgrade-failed` (old data intact), `newer-version`, or `failed`.
 * While another tab holds an older version open, the promise waits and `onBlocked` is called.
 */
export async function openStore(options: OpenStoreOptions = {}): Promise<Store> {
  const name = options.name ?? DEFAULT_DB_NAME;
  const factory = options.idbFactory ?? (globalThis as { indexedDB?: IDBFactory }).indexedDB;
  if (!factory) throw new StoreError('unsupported', 'This browser has no IndexedDB: worksheets cannot be stored on this device.');
  const migrations = options.migrations ?? MIGRATIONS;
  const version = migrations[migrations.length - 1]?.version ?? DB_VERSION;

  let upgradeError: unknown;
  /** The version existing data was migrated from (undefined for a new database or no upgrade). */
  let migratedFrom: number | undefined;
  /** The upgrade steps' run; settles (never rejects) when they finish or fail. */
  let stepsRun: Promise<void> = Promise.resolve();
  let request: IDBOpenDBRequest;
  try {
    request = factory.open(name, version);
  } catch (err) {
    throw new StoreError('failed', `Could not open the notebook database: ${errorMessage(err)}`);
  }
  const opening = wrap(request) as Promise<IDBPDatabase<unknown>>;

  request.addEventListener('upgradeneeded', (event) => {
    if (event.oldVersion > 0) migratedFrom = event.oldVersion;
    const db = wrap(request.result);
    const tx = wrap(request.transaction!) as unknown as IDBPTransaction<unknown, string[], 'versionchange'>;
    // idb makes a `done` promise for every transaction; an aborted upgrade must not leave it unhandled.
    tx.done.catch(() => undefined);
    const steps = migrations.filter((m) => m.version > event.oldVersion);
    // idb does not wait for an async upgrade: run the steps ourselves and abort on failure, so a
    // half-done upgrade never commits (reference §1.7, idb#281).
    stepsRun = (async () => {
      for (const step of steps) await step.run(db, tx);
    })().catch((err: unknown) => {
      upgradeError ??= err;
      try {
        tx.abort();
      } catch {
        // Already finished: nothing more to undo.
      }
    });
  });
  request.addEventListener('blocked', (event) => {
    options.onBlocked?.({ currentVersion: event.oldVersion, requestedVersion: event.newVersion });
  });

  let raw: IDBPDatabase<unknown>;
  try {
    raw = await opening;
  } catch (err) {
    if (upgradeError !== undefined) {
      throw new StoreError(
        'upgrade-failed',
        `The notebook database could not be upgraded to version ${version}; it was left as it was. (${errorMessage(upgradeError)})`,
      );
    }
    if (errorName(err) === 'VersionError') {
      throw new StoreError('newer-version', 'The notebook was opened by a newer version of Tidemark. Reload this page to use it.');
    }
    throw new StoreError('failed', `Could not open the notebook database: ${errorName(err) || 'error'} ${errorMessage(err)}`.trim());
  }
  // Normally already settled: steps await only IndexedDB requests, so they end before the commit.
  await stepsRun;
  if (upgradeError !== undefined) {
    // A step failed after its transaction had already committed (it awaited something other than
    // an IndexedDB request). The upgrade could not be undone: refuse loudly rather than run on
    // half-migrated data. Steps are tested so this stays a development-time failure.
    raw.close();
    throw new StoreError(
      'upgrade-failed',
      `A schema step failed after the upgrade to version ${version} had committed: ${errorMessage(upgradeError)}`,
    );
  }
  const db = raw as unknown as DB;
  const opened = new NotebookStore(name, db, options.broadcast ?? true);
  db.addEventListener('versionchange', (event) => {
    options.onVersionChange?.({ currentVersion: event.oldVersion, requestedVersion: event.newVersion });
    opened.close();
  });
  db.addEventListener('close', () => {
    opened.markClosed();
    options.onClosed?.();
  });
  if (migratedFrom !== undefined && db.objectStoreNames.contains('meta')) {
    // The upgrade transaction takes the browser's default durability (relaxed in Chromium since
    // 121; the open() call has no option for it). A migration must not be lost once the app runs
    // on the new shape, so a 'strict' write follows at once: committing it flushes the storage
    // log, the upgrade's writes included, before anything is shown or written (reference §1.2).
    try {
      const flush = db.transaction('meta', 'readwrite', { durability: 'strict' });
      await Promise.all([flush.objectStore('meta').put({ from: migratedFrom, to: db.version }, 'lastUpgrade'), flush.done]);
    } catch {
      // The upgrade itself has committed; a failed flush only means the browser's default applies.
    }
  }
  return opened;
}

// ---------------------------------------------------------------------------------------------
// Implementation

const CLOSED_MESSAGE =
  'The notebook database is closed in this tab (a newer version was opened elsewhere, or the browser closed it). Reload the page; your last saved change is kept.';

function closedFailure(): WriteFailure {
  return { ok: false, reason: 'closed', message: CLOSED_MESSAGE };
}

const LOCK_CHANGED_MESSAGE =
  'The notebook lock was switched on, off or changed in another tab, so this tab may not write. Export what is on screen if you need it, then reload this tab.';
const LOCKED_MESSAGE = 'The notebook is locked. Unlock it with its passphrase to read or change worksheets.';

function lockChangedFailure(): WriteFailure {
  return { ok: false, reason: 'closed', message: LOCK_CHANGED_MESSAGE };
}

function failure(err: unknown, closed: boolean): WriteFailure {
  const name = errorName(err);
  if (name === 'QuotaExceededError') {
    return {
      ok: false,
      reason: 'quota',
      message: 'Device storage is full: this change was not saved. Export a backup, free some space, then try again.',
    };
  }
  if (closed || name === 'InvalidStateError') return closedFailure();
  return { ok: false, reason: 'failed', message: `The change was not saved (${name || 'error'}: ${errorMessage(err)}).` };
}

function invalid(message: string, problems: string[]): WriteFailure {
  return { ok: false, reason: 'invalid', message, problems };
}

/**
 * What `commit` validates: everything but the rows and the log (cheap), the rows the change's
 * entries name, and the new entries. Validating the whole worksheet on every keystroke costs
 * ~50 ms for 1,000 rows and 9,000 log entries (measured in Node), above the 50 ms long-task
 * budget; the unchanged rest was validated when it was stored. `create` and `putAll` validate
 * everything.
 */
const ChangeHeader = Worksheet.omit({ rows: true, log: true });
const ChangeRow = Worksheet.shape.rows.element;
const ChangeEntry = Worksheet.shape.log.element;

/** Checks a change before any transaction is opened. Returns problems, or [] when fine. */
function checkChange(change: Change, expectedRev: number): string[] {
  const ws = change.worksheet;
  if (typeof ws !== 'object' || ws === null || !Array.isArray(ws.rows) || !Array.isArray(ws.log) || !Array.isArray(change.entries)) {
    return ['worksheet: not a worksheet'];
  }
  const { rows, log, ...header } = ws;
  const problems: string[] = [];
  const head = ChangeHeader.safeParse(header);
  if (!head.success) problems.push(...formatIssues(head.error.issues, ['worksheet']));
  const touched = new Set(change.entries.map((e) => e.rowId).filter((id): id is string => typeof id === 'string'));
  rows.forEach((row, i) => {
    if (!touched.has(row.id)) return;
    const r = ChangeRow.safeParse(row);
    if (!r.success) problems.push(...formatIssues(r.error.issues, ['worksheet', 'rows', i]));
    if (i > 0 && rows[i - 1]!.time > row.time) problems.push(`worksheet.rows[${i}].time: rows must stay in time order`);
    if (i + 1 < rows.length && row.time > rows[i + 1]!.time) problems.push(`worksheet.rows[${i}].time: rows must stay in time order`);
  });
  change.entries.forEach((entry, i) => {
    const e = ChangeEntry.safeParse(entry);
    if (!e.success) problems.push(...formatIssues(e.error.issues, ['entries', i]));
  });
  if (problems.length > 0) return problems.slice(0, 50);
  if (!Number.isInteger(expectedRev) || expectedRev < 0) return [`expectedRev: ${expectedRev} is not a revision`];
  if (ws.rev <= expectedRev) return [`worksheet.rev: ${ws.rev} must be above the revision the edit started from (${expectedRev})`];
  const tail = log.slice(log.length - change.entries.length);
  if (change.entries.length > log.length || tail.some((e, i) => e !== change.entries[i] && e.id !== change.entries[i]!.id)) {
    return ["entries: the change's entries must be the last entries of worksheet.log"];
  }
  return [];
}

/**
 * Marks a request's promise as handled the moment it is issued: if a later request in the same
 * synchronous batch throws, the transaction aborts and these reject before anyone awaits them.
 * (The caller still awaits them through Promise.all, which sees the rejection.)
 */
function issued<T>(request: Promise<T>): Promise<T> {
  request.catch(() => undefined);
  return request;
}

function logRange(id: string): IDBKeyRange {
  return IDBKeyRange.bound([id, 0], [id, Infinity]);
}

type ReadTx = IDBPTransaction<TidemarkDB, StoreName[], IDBTransactionMode>;

/** Rebuilds and validates a worksheet from its record and log entries. */
function assemble(id: string, record: unknown, entries: readonly unknown[]): Worksheet {
  const parsed = StoredWorksheet.safeParse(record);
  if (!parsed.success) {
    throw new StoreError('corrupt', `Worksheet "${id}" is stored in a shape this app cannot read.`, formatIssues(parsed.error.issues));
  }
  const { logCount, ...rest } = parsed.data;
  const log: Worksheet['log'] = [];
  const problems: string[] = [];
  entries.forEach((raw, i) => {
    const e = StoredLogEntry.safeParse(raw);
    if (!e.success) problems.push(...formatIssues(e.error.issues, ['log', i]));
    else if (e.data.seq !== i || e.data.worksheetId !== id) problems.push(`log[${i}]: out of sequence (seq ${e.data.seq})`);
    else log.push(e.data.entry);
  });
  if (entries.length !== logCount) problems.push(`log: ${entries.length} entries stored, ${logCount} expected`);
  if (problems.length > 0) {
    throw new StoreError('corrupt', `The edit log of worksheet "${id}" is damaged.`, problems.slice(0, 50));
  }
  return { ...rest, log };
}

/** A worksheet's stored record and log entries as read (possibly sealed), before assembly. */
interface RawWorksheet {
  record: unknown;
  entries: unknown[];
}

async function readRaw(tx: ReadTx, id: string): Promise<RawWorksheet | undefined> {
  const [record, entries] = await Promise.all([
    tx.objectStore('worksheets').get(id),
    // The primary key [worksheetId, seq] keeps a worksheet's entries together and in order.
    tx.objectStore('log').getAll(logRange(id)),
  ]);
  if (record === undefined) return undefined;
  return { record, entries };
}

/** What is written for one worksheet: its record, summary and log entries (sealed or plain). */
interface Pieces {
  record: Record<string, unknown>;
  summary: Record<string, unknown>;
  entries: Record<string, unknown>[];
}

/** Writes (put) a worksheet's pieces, with `rev` in place of the one they were made with. Returns the requests. */
function writePieces(tx: IDBPTransaction<TidemarkDB, StoreName[], 'readwrite'>, p: Pieces, rev?: number): Promise<unknown>[] {
  const log = tx.objectStore('log');
  // The stores hold StoredWorksheet/WorksheetSummary/StoredLogEntry, or their sealed form.
  const record = (rev === undefined ? p.record : { ...p.record, rev }) as StoredWorksheet;
  const summary = (rev === undefined ? p.summary : { ...p.summary, rev }) as WorksheetSummary;
  return [
    issued(tx.objectStore('worksheets').put(record)),
    issued(tx.objectStore('summaries').put(summary)),
    ...p.entries.map((entry) => issued(log.put(entry as StoredLogEntry))),
  ];
}

/** Whether a write may go ahead: the lock record's key id is this connection's. */
async function lockMatches(tx: IDBPTransaction<TidemarkDB, StoreName[], 'readwrite'>, keyId: string | undefined): Promise<boolean> {
  return lockKeyId(await tx.objectStore('meta').get(LOCK_META_KEY)) === keyId;
}

function openChannel(name: string, enabled: boolean): BroadcastChannel | undefined {
  const Ctor = (globalThis as { BroadcastChannel?: typeof BroadcastChannel }).BroadcastChannel;
  if (!enabled || typeof Ctor !== 'function') return undefined;
  try {
    const channel = new Ctor(name);
    // Node: do not keep the process (CLI, tests) alive for the channel.
    (channel as unknown as { unref?: () => void }).unref?.();
    return channel;
  } catch {
    return undefined;
  }
}

class NotebookStore implements Store {
  readonly version: number;
  private closed = false;
  private readonly channel: BroadcastChannel | undefined;
  private readonly listeners = new Set<(notice: ChangeNotice) => void>();
  private codec: RecordCodec | undefined;

  constructor(
    readonly name: string,
    private readonly db: DB,
    broadcast: boolean,
  ) {
    this.version = db.version;
    this.channel = openChannel(name, broadcast);
    this.channel?.addEventListener('message', (event: MessageEvent<unknown>) => {
      const notice = ChangeNotice.safeParse(event.data);
      if (!notice.success) return;
      for (const listener of this.listeners) listener(notice.data);
    });
  }

  isOpen(): boolean {
    return !this.closed;
  }

  get keyId(): string | undefined {
    return this.codec?.keyId;
  }

  setCodec(codec: RecordCodec | undefined): void {
    this.codec = codec;
  }

  /** Opens a record read from `store` (plain records pass through). */
  private async openValue(store: SealedStore, raw: unknown): Promise<unknown> {
    if (!isSealed(raw)) return raw;
    if (!this.codec) throw new StoreError('locked', LOCKED_MESSAGE);
    return this.codec.open(store, raw);
  }

  /** Opens and validates a worksheet read with readRaw (after its transaction has ended). */
  private async assembleRaw(id: string, raw: RawWorksheet): Promise<Worksheet> {
    const [record, entries] = await Promise.all([
      this.openValue('worksheets', raw.record),
      Promise.all(raw.entries.map((e) => this.openValue('log', e))),
    ]);
    return assemble(id, record, entries);
  }

  /** The records to write for a worksheet, sealed when a codec is set (before any transaction). */
  private async pieces(ws: Worksheet, entries: readonly { seq: number; entry: Worksheet['log'][number] }[]): Promise<Pieces> {
    const record = toStoredWorksheet(ws) as Record<string, unknown>;
    const summary = summaryOf(ws) as Record<string, unknown>;
    const plainEntries = entries.map((e) => ({ worksheetId: ws.id, seq: e.seq, entry: e.entry }));
    const codec = this.codec;
    if (!codec) return { record, summary, entries: plainEntries };
    const [r, s, es] = await Promise.all([
      codec.seal('worksheets', record),
      codec.seal('summaries', summary),
      Promise.all(plainEntries.map((e) => codec.seal('log', e))),
    ]);
    return { record: r, summary: s, entries: es };
  }

  markClosed(): void {
    this.closed = true;
    this.channel?.close();
  }

  close(): void {
    if (this.closed) return;
    this.markClosed();
    this.db.close();
  }

  onExternalChange(callback: (notice: ChangeNotice) => void): () => void {
    this.listeners.add(callback);
    return () => {
      this.listeners.delete(callback);
    };
  }

  private notify(notice: ChangeNotice): void {
    if (this.closed) return;
    try {
      this.channel?.postMessage(notice);
    } catch {
      // A notice is only a hint to re-read; losing one is harmless.
    }
  }

  private assertOpen(): void {
    if (this.closed) throw new StoreError('closed', CLOSED_MESSAGE);
  }

  private readTx(stores: StoreName[]): ReadTx {
    this.assertOpen();
    try {
      return this.db.transaction(stores, 'readonly');
    } catch (err) {
      throw new StoreError(
        this.closed || errorName(err) === 'InvalidStateError' ? 'closed' : 'failed',
        `Could not read the notebook: ${errorMessage(err)}`,
      );
    }
  }

  private writeTx(stores: StoreName[], durability?: 'strict'): IDBPTransaction<TidemarkDB, StoreName[], 'readwrite'> {
    return durability ? this.db.transaction(stores, 'readwrite', { durability }) : this.db.transaction(stores, 'readwrite');
  }

  async list(): Promise<NotebookListing> {
    const tx = this.readTx(['summaries', 'worksheets']);
    const [raw, ids] = await Promise.all([
      tx.objectStore('summaries').index('by-updated').getAll(),
      tx.objectStore('worksheets').getAllKeys(),
      tx.done,
    ]);
    const summaries: WorksheetSummary[] = [];
    const unreadable: Unreadable[] = [];
    const seen = new Set<string>();
    const opened = await Promise.all(
      raw.reverse().map((value) =>
        this.openValue('summaries', value).catch((err: unknown) => {
          // Locked: the whole list is unreadable, say so once. A damaged sealed summary: that entry only.
          if (err instanceof StoreError && err.kind === 'locked') throw err;
          return value;
        }),
      ),
    );
    for (const value of opened) {
      const parsed = WorksheetSummary.safeParse(value);
      const id = typeof (value as { id?: unknown }).id === 'string' ? (value as { id: string }).id : '';
      seen.add(id);
      if (parsed.success) summaries.push(parsed.data);
      else unreadable.push({ id, message: `Its summary cannot be read: ${formatIssues(parsed.error.issues).join('; ')}` });
    }
    for (const id of ids) {
      if (!seen.has(id)) unreadable.push({ id, message: 'The worksheet record cannot be read (no summary could be made of it).' });
    }
    return { summaries, unreadable };
  }

  async get(id: string): Promise<Worksheet | undefined> {
    const tx = this.readTx(['worksheets', 'log']);
    const [raw] = await Promise.all([readRaw(tx, id), tx.done]);
    return raw === undefined ? undefined : this.assembleRaw(id, raw);
  }

  async getAll(): Promise<{ worksheets: Worksheet[]; unreadable: Unreadable[] }> {
    const tx = this.readTx(['worksheets', 'log']);
    const [records, entries] = await Promise.all([tx.objectStore('worksheets').getAll(), tx.objectStore('log').getAll(), tx.done]);
    const byWorksheet = new Map<string, unknown[]>();
    for (const e of entries) {
      const list = byWorksheet.get(e.worksheetId) ?? [];
      list.push(e);
      byWorksheet.set(e.worksheetId, list);
    }
    const worksheets: Worksheet[] = [];
    const unreadable: Unreadable[] = [];
    for (const record of records) {
      const id = String((record as { id?: unknown }).id);
      try {
        worksheets.push(await this.assembleRaw(id, { record, entries: byWorksheet.get(id) ?? [] }));
      } catch (err) {
        if (err instanceof StoreError && err.kind === 'locked') throw err;
        unreadable.push({ id, message: err instanceof StoreError ? [err.message, ...err.problems].join(' ') : errorMessage(err) });
      }
    }
    return { worksheets, unreadable };
  }

  async create(ws: Worksheet): Promise<CreateResult> {
    if (this.closed) return closedFailure();
    const parsed = Worksheet.safeParse(ws);
    if (!parsed.success) return invalid('This is not a valid worksheet.', formatIssues(parsed.error.issues));
    const keyId = this.codec?.keyId;
    const pieces = await this.pieces(
      ws,
      ws.log.map((entry, seq) => ({ seq, entry })),
    );
    let tx: IDBPTransaction<TidemarkDB, StoreName[], 'readwrite'>;
    try {
      tx = this.writeTx(['worksheets', 'summaries', 'log', 'meta']);
    } catch (err) {
      return failure(err, this.closed);
    }
    const done = tx.done;
    done.catch(() => undefined);
    try {
      if (!(await lockMatches(tx, keyId))) {
        this.abortQuietly(tx);
        return lockChangedFailure();
      }
      const existing = await tx.objectStore('worksheets').getKey(ws.id);
      if (existing !== undefined) {
        await done;
        return { ok: false, reason: 'exists', message: `A worksheet with id "${ws.id}" already exists.` };
      }
      await Promise.all([...writePieces(tx, pieces), done]);
    } catch (err) {
      return this.abortWith(tx, err);
    }
    this.notify({ type: 'changed', id: ws.id, rev: ws.rev });
    return { ok: true, worksheet: ws };
  }

  async commit(change: Change, expectedRev: number): Promise<CommitResult> {
    if (this.closed) return closedFailure();
    const problems = checkChange(change, expectedRev);
    if (problems.length > 0) return invalid('The change is not valid and was not saved.', problems);
    const ws = change.worksheet;
    const firstSeq = ws.log.length - change.entries.length;
    const keyId = this.codec?.keyId;
    // Sealed (when locked) before the transaction: nothing but IndexedDB requests is awaited inside.
    const pieces = await this.pieces(
      ws,
      change.entries.map((entry, i) => ({ seq: firstSeq + i, entry })),
    );

    let tx: IDBPTransaction<TidemarkDB, StoreName[], 'readwrite'>;
    try {
      tx = this.writeTx(['worksheets', 'summaries', 'log', 'meta']);
    } catch (err) {
      return failure(err, this.closed);
    }
    const done = tx.done;
    done.catch(() => undefined);
    try {
      if (!(await lockMatches(tx, keyId))) {
        this.abortQuietly(tx);
        await done.catch(() => undefined);
        return lockChangedFailure();
      }
      // The stored rev and log length, read without loading the stored worksheet: its summary
      // (written with the record in the same transaction every time; `rev` stays clear when
      // sealed) carries the rev, and the log holds entries 0..logCount-1, so entry firstSeq must
      // be free and the one before it taken. Reading the whole record back instead costs about
      // as much as writing it: most of a commit of a long worksheet. Without a usable summary,
      // the record is read as before.
      const log = tx.objectStore('log');
      const [head, nextKey, lastKey] = await Promise.all([
        tx.objectStore('summaries').get(ws.id),
        log.getKey([ws.id, firstSeq]),
        firstSeq > 0 ? log.getKey([ws.id, firstSeq - 1]) : Promise.resolve(undefined),
      ]);
      let storedRev = (head as { rev?: unknown } | undefined)?.rev;
      let storedCount: unknown = nextKey === undefined && (firstSeq === 0 || lastKey !== undefined) ? firstSeq : 'a different number of';
      if (typeof storedRev !== 'number') {
        const stored = await tx.objectStore('worksheets').get(ws.id);
        if (stored === undefined) {
          await done;
          return {
            ok: false,
            reason: 'missing',
            message: `Worksheet "${ws.label}" is no longer in this notebook (removed in another tab?).`,
          };
        }
        storedRev = (stored as { rev?: unknown }).rev;
        storedCount = (stored as { logCount?: unknown }).logCount;
      }
      if (storedRev !== expectedRev) {
        const raw = await readRaw(tx, ws.id);
        await done;
        if (!raw) return { ok: false, reason: 'missing', message: `Worksheet "${ws.label}" is no longer in this notebook.` };
        const current = await this.assembleRaw(ws.id, raw);
        return {
          ok: false,
          reason: 'conflict',
          message: `Worksheet "${current.label}" was changed in another tab or window (version ${current.rev}, this edit started from ${expectedRev}).`,
          current,
        };
      }
      if (storedCount !== firstSeq) {
        tx.abort();
        await done.catch(() => undefined);
        return invalid('The change does not continue the stored edit log.', [
          `entries: the stored log has ${String(storedCount)} entries, the change starts at entry ${firstSeq}`,
        ]);
      }
      await Promise.all([
        issued(tx.objectStore('worksheets').put(pieces.record as StoredWorksheet)),
        issued(tx.objectStore('summaries').put(pieces.summary as WorksheetSummary)),
        // `add`, not `put`: an entry that already exists means the log did not continue; abort.
        ...pieces.entries.map((entry) => issued(log.add(entry as StoredLogEntry))),
        done,
      ]);
    } catch (err) {
      if (err instanceof StoreError) {
        // The stored version could not be read to show the conflict.
        this.abortQuietly(tx);
        return { ok: false, reason: 'failed', message: [err.message, ...err.problems].join(' ') };
      }
      return this.abortWith(tx, err);
    }
    this.notify({ type: 'changed', id: ws.id, rev: ws.rev });
    return { ok: true, worksheet: ws };
  }

  async remove(id: string): Promise<RemoveResult> {
    if (this.closed) return closedFailure();
    let tx: IDBPTransaction<TidemarkDB, StoreName[], 'readwrite'>;
    try {
      tx = this.writeTx(['worksheets', 'summaries', 'log']);
    } catch (err) {
      return failure(err, this.closed);
    }
    const done = tx.done;
    done.catch(() => undefined);
    let removed: boolean;
    try {
      removed = (await tx.objectStore('worksheets').getKey(id)) !== undefined;
      await Promise.all([
        issued(tx.objectStore('worksheets').delete(id)),
        issued(tx.objectStore('summaries').delete(id)),
        issued(tx.objectStore('log').delete(logRange(id))),
        done,
      ]);
    } catch (err) {
      return this.abortWith(tx, err);
    }
    if (removed) this.notify({ type: 'removed', id });
    return { ok: true, removed };
  }

  async putAll(worksheets: readonly Worksheet[], options: PutAllOptions): Promise<PutAllResult> {
    if (this.closed) return closedFailure();
    const problems: string[] = [];
    const ids = new Set<string>();
    worksheets.forEach((ws, i) => {
      const parsed = Worksheet.safeParse(ws);
      if (!parsed.success) problems.push(...formatIssues(parsed.error.issues, ['worksheets', i]));
      else if (ids.has(ws.id)) problems.push(`worksheets[${i}].id: "${ws.id}" appears twice`);
      ids.add(ws.id);
    });
    if (problems.length > 0) return invalid('The worksheets are not valid; nothing was written.', problems.slice(0, 50));
    const mayReplace = (id: string): boolean =>
      options.replace === true || (Array.isArray(options.replace) && options.replace.includes(id));
    const keyId = this.codec?.keyId;
    const allPieces = await Promise.all(
      worksheets.map((ws) =>
        this.pieces(
          ws,
          ws.log.map((entry, seq) => ({ seq, entry })),
        ),
      ),
    );

    let tx: IDBPTransaction<TidemarkDB, StoreName[], 'readwrite'>;
    try {
      tx = this.writeTx(['worksheets', 'summaries', 'log', 'meta'], 'strict');
    } catch (err) {
      return failure(err, this.closed);
    }
    const done = tx.done;
    done.catch(() => undefined);
    const written: Worksheet[] = [];
    const added: string[] = [];
    const replaced: string[] = [];
    try {
      if (!(await lockMatches(tx, keyId))) {
        this.abortQuietly(tx);
        await done.catch(() => undefined);
        return lockChangedFailure();
      }
      const store = tx.objectStore('worksheets');
      const existing = await Promise.all(worksheets.map((ws) => issued(store.get(ws.id))));
      const refused = worksheets.filter((ws, i) => existing[i] !== undefined && !mayReplace(ws.id)).map((ws) => ws.id);
      if (refused.length > 0) {
        await done;
        return {
          ok: false,
          reason: 'exists',
          message: `${refused.length} worksheet(s) already exist and were not chosen for replacement; nothing was imported.`,
          ids: refused,
        };
      }
      const requests: Promise<unknown>[] = [];
      worksheets.forEach((ws, i) => {
        const old = existing[i];
        if (old === undefined) {
          added.push(ws.id);
          written.push(ws);
          requests.push(...writePieces(tx, allPieces[i]!));
        } else {
          // A replaced worksheet gets a rev above the stored one, so an edit still open in another
          // tab on the old version is reported as a conflict instead of landing on the new data.
          const oldRev = typeof old.rev === 'number' ? old.rev : 0;
          const next = { ...ws, rev: Math.max(oldRev, ws.rev) + 1 };
          replaced.push(ws.id);
          written.push(next);
          requests.push(issued(tx.objectStore('log').delete(logRange(ws.id))));
          // rev is one of the CLEAR_FIELDS, so it can be set without sealing again.
          requests.push(...writePieces(tx, allPieces[i]!, next.rev));
        }
      });
      await Promise.all([...requests, done]);
    } catch (err) {
      return this.abortWith(tx, err);
    }
    for (const ws of written) this.notify({ type: 'changed', id: ws.id, rev: ws.rev });
    return { ok: true, worksheets: written, added, replaced };
  }

  async reseal(next: RecordCodec | undefined, lock: unknown): Promise<MetaResult> {
    if (this.closed) return closedFailure();
    const keyId = this.codec?.keyId;
    for (let attempt = 0; attempt < 5; attempt++) {
      // 1. A snapshot of everything, read in one transaction.
      let snapshot: { records: unknown[]; summaries: unknown[]; entries: unknown[]; lockNow: unknown };
      try {
        const tx = this.readTx(['worksheets', 'summaries', 'log', 'meta']);
        const [records, summaries, entries, lockNow] = await Promise.all([
          tx.objectStore('worksheets').getAll(),
          tx.objectStore('summaries').getAll(),
          tx.objectStore('log').getAll(),
          tx.objectStore('meta').get(LOCK_META_KEY),
          tx.done,
        ]);
        snapshot = { records, summaries, entries, lockNow };
      } catch (err) {
        return failure(err, this.closed);
      }
      if (lockKeyId(snapshot.lockNow) !== keyId) return lockChangedFailure();
      // 2. Opened with the key in use and sealed with the next one, outside any transaction.
      let rewritten: { records: Record<string, unknown>[]; summaries: Record<string, unknown>[]; entries: Record<string, unknown>[] };
      try {
        const convert = (store: SealedStore, values: unknown[]) =>
          Promise.all(
            values.map(async (v) => {
              const plain = (await this.openValue(store, v)) as Record<string, unknown>;
              return next ? next.seal(store, plain) : plain;
            }),
          );
        const [records, summaries, entries] = await Promise.all([
          convert('worksheets', snapshot.records),
          convert('summaries', snapshot.summaries),
          convert('log', snapshot.entries),
        ]);
        rewritten = { records, summaries, entries };
      } catch (err) {
        const message = err instanceof StoreError ? err.message : errorMessage(err);
        return { ok: false, reason: 'failed', message: `The lock was not changed: ${message}` };
      }
      // 3. Written in one strict transaction, only if nothing changed since the snapshot.
      let tx: IDBPTransaction<TidemarkDB, StoreName[], 'readwrite'>;
      try {
        tx = this.writeTx(['worksheets', 'summaries', 'log', 'meta'], 'strict');
      } catch (err) {
        return failure(err, this.closed);
      }
      const done = tx.done;
      done.catch(() => undefined);
      try {
        const [records, logCount, summaryCount, lockNow] = await Promise.all([
          tx.objectStore('worksheets').getAll(),
          tx.objectStore('log').count(),
          tx.objectStore('summaries').count(),
          tx.objectStore('meta').get(LOCK_META_KEY),
        ]);
        const revs = (list: unknown[]) =>
          list
            .map(
              (r) =>
                `${String((r as { id?: unknown }).id)}:${String((r as { rev?: unknown }).rev)}:${String((r as { logCount?: unknown }).logCount)}`,
            )
            .join('|');
        const unchanged =
          revs(records) === revs(snapshot.records) &&
          logCount === snapshot.entries.length &&
          summaryCount === snapshot.summaries.length &&
          lockKeyId(lockNow) === keyId;
        if (!unchanged) {
          this.abortQuietly(tx);
          await done.catch(() => undefined);
          continue;
        }
        const meta = tx.objectStore('meta');
        await Promise.all([
          ...rewritten.records.map((r) => issued(tx.objectStore('worksheets').put(r as StoredWorksheet))),
          ...rewritten.summaries.map((r) => issued(tx.objectStore('summaries').put(r as WorksheetSummary))),
          ...rewritten.entries.map((r) => issued(tx.objectStore('log').put(r as StoredLogEntry))),
          issued<unknown>(lock === undefined ? meta.delete(LOCK_META_KEY) : meta.put(lock, LOCK_META_KEY)),
          done,
        ]);
      } catch (err) {
        return this.abortWith(tx, err);
      }
      this.codec = next;
      for (const r of rewritten.records) {
        const id = r['id'];
        const rev = r['rev'];
        if (typeof id === 'string' && typeof rev === 'number') this.notify({ type: 'changed', id, rev });
      }
      return { ok: true };
    }
    return { ok: false, reason: 'failed', message: 'The notebook kept changing in another tab; the lock was not changed. Try again.' };
  }

  async getMeta(key: string): Promise<unknown> {
    const tx = this.readTx(['meta']);
    const [value] = await Promise.all([tx.objectStore('meta').get(key), tx.done]);
    return value;
  }

  async setMeta(key: string, value: unknown): Promise<MetaResult> {
    if (this.closed) return closedFailure();
    let tx: IDBPTransaction<TidemarkDB, StoreName[], 'readwrite'>;
    try {
      tx = this.writeTx(['meta']);
    } catch (err) {
      return failure(err, this.closed);
    }
    const done = tx.done;
    done.catch(() => undefined);
    try {
      await Promise.all([tx.objectStore('meta').put(value, key), done]);
    } catch (err) {
      return this.abortWith(tx, err);
    }
    return { ok: true };
  }

  private abortQuietly(tx: IDBPTransaction<TidemarkDB, StoreName[], 'readwrite'>): void {
    try {
      tx.abort();
    } catch {
      // Already committed or aborted.
    }
  }

  /** Makes sure nothing of a failed write commits, then reports the first cause. */
  private async abortWith(tx: IDBPTransaction<TidemarkDB, StoreName[], 'readwrite'>, err: unknown): Promise<WriteFailure> {
    this.abortQuietly(tx);
    await tx.done.catch(() => undefined);
    return failure(err, this.closed);
  }
}

// ---------------------------------------------------------------------------------------------
// Persistence (navigator.storage), guarded

/** The subset of StorageManager used here (injectable for tests). */
export interface StorageManagerLike {
  persist?: () => Promise<boolean>;
  persisted?: () => Promise<boolean>;
  estimate?: () => Promise<{ usage?: number; quota?: number }>;
}

export type PersistenceState = 'persisted' | 'best-effort' | 'unsupported';

export interface PersistenceInfo {
  state: PersistenceState;
  /** Bytes used and available to this origin, when the browser says (approximate). */
  usage?: number;
  quota?: number;
}

function defaultStorageManager(): StorageManagerLike | undefined {
  return (globalThis as { navigator?: { storage?: StorageManagerLike } }).navigator?.storage;
}

/**
 * Asks the browser to keep this origin's data under storage pressure. Ask after the first real
 * save, ideally in a user gesture; browsers may refuse silently (reference §1.4).
 */
export async function requestPersistence(storage: StorageManagerLike | undefined = defaultStorageManager()): Promise<PersistenceState> {
  if (!storage || typeof storage.persist !== 'function') return 'unsupported';
  try {
    return (await storage.persist()) ? 'persisted' : 'best-effort';
  } catch {
    return 'unsupported';
  }
}

export async function persistenceState(storage: StorageManagerLike | undefined = defaultStorageManager()): Promise<PersistenceInfo> {
  if (!storage || typeof storage.persisted !== 'function') return { state: 'unsupported' };
  const info: PersistenceInfo = { state: 'unsupported' };
  try {
    info.state = (await storage.persisted()) ? 'persisted' : 'best-effort';
  } catch {
    return { state: 'unsupported' };
  }
  if (typeof storage.estimate === 'function') {
    try {
      const estimate = await storage.estimate();
      if (typeof estimate.usage === 'number') info.usage = estimate.usage;
      if (typeof estimate.quota === 'number') info.quota = estimate.quota;
    } catch {
      // The estimate is optional.
    }
  }
  return info;
}
