// Raw IndexedDB helpers for storage tests: fixtures are built with plain IndexedDB calls, not
// through the store, so the store is checked against data it did not write itself.

export function req<T>(request: IDBRequest<T>): Promise<T> {
  return new Promise((resolve, reject) => {
    request.onsuccess = () => resolve(request.result);
    request.onerror = () => reject(request.error ?? new Error('IndexedDB request failed'));
  });
}

export function txDone(tx: IDBTransaction): Promise<void> {
  return new Promise((resolve, reject) => {
    tx.oncomplete = () => resolve();
    tx.onabort = () => reject(tx.error ?? new Error('aborted'));
    tx.onerror = () => reject(tx.error ?? new Error('error'));
  });
}

/** Opens a database at a version with a plain upgrade callback (or none). */
export function rawOpen(
  factory: IDBFactory,
  name: string,
  version?: number,
  upgrade?: (db: IDBDatabase, tx: IDBTransaction, oldVersion: number) => void,
): Promise<IDBDatabase> {
  return new Promise((resolve, reject) => {
    const request = version === undefined ? factory.open(name) : factory.open(name, version);
    request.onupgradeneeded = (event) => upgrade?.(request.result, request.transaction!, event.oldVersion);
    request.onsuccess = () => resolve(request.result);
    request.onerror = () => reject(request.error ?? new Error('IndexedDB request failed'));
  });
}

/** Reads every value of a store. */
export async function rawAll(db: IDBDatabase, store: string): Promise<unknown[]> {
  const tx = db.transaction(store, 'readonly');
  const [values] = await Promise.all([req<unknown[]>(tx.objectStore(store).getAll()), txDone(tx)]);
  return values;
}

/** Writes values (with in-line keys, or [key, value] pairs for out-of-line stores). */
export async function rawPut(db: IDBDatabase, store: string, values: readonly unknown[], keys?: readonly IDBValidKey[]): Promise<void> {
  const tx = db.transaction(store, 'readwrite');
  values.forEach((v, i) => (keys ? tx.objectStore(store).put(v, keys[i]) : tx.objectStore(store).put(v)));
  await txDone(tx);
}

/** Rejects if the promise does not settle in time (a hang is a failure, not a stuck test). */
export function within<T>(ms: number, promise: Promise<T>, what: string): Promise<T> {
  let timer: ReturnType<typeof setTimeout> | undefined;
  const timeout = new Promise<never>((_, reject) => {
    timer = setTimeout(() => reject(new Error(`${what}: did not settle within ${ms} ms`)), ms);
  });
  return Promise.race([promise, timeout]).finally(() => clearTimeout(timer));
}

/**
 * The version-1 layout, written out by hand (independent of src/storage/schema.ts):
 * worksheets (keyPath id), log (keyPath [worksheetId, seq], index by-worksheet), meta.
 */
export function createV1Layout(db: IDBDatabase): void {
  db.createObjectStore('worksheets', { keyPath: 'id' });
  const log = db.createObjectStore('log', { keyPath: ['worksheetId', 'seq'] });
  log.createIndex('by-worksheet', 'worksheetId');
  db.createObjectStore('meta');
}
