// Browser smoke test for the toolchain: TypeScript is compiled by the dev server, mathjs's ES
// module build (which imports CommonJS packages) loads in Chromium, and real IndexedDB works.
// eslint-disable-next-line no-restricted-imports -- this smoke test checks that mathjs itself loads in Chromium
import { compile } from 'mathjs';

function assertEqual(actual: unknown, expected: unknown, what: string): void {
  if (!Object.is(actual, expected)) {
    throw new Error(`${what}: expected ${String(expected)}, got ${String(actual)}`);
  }
}

function request<T>(req: IDBRequest<T>): Promise<T> {
  return new Promise((resolve, reject) => {
    req.onsuccess = () => resolve(req.result);
    req.onerror = () => reject(req.error ?? new Error('IndexedDB request failed'));
  });
}

describe('toolchain in the browser', () => {
  it('loads mathjs and evaluates a compiled expression', () => {
    // sqrt(16) = 4 (arithmetic).
    assertEqual(compile('sqrt(16)').evaluate(), 4, 'sqrt(16)');
    // Operator precedence: multiplication before addition (common practice, no source).
    assertEqual(compile('2 + 3 * 4').evaluate(), 14, '2 + 3 * 4');
  });

  it('has a working IndexedDB (write, read back, delete)', async () => {
    assertEqual(typeof indexedDB, 'object', 'typeof indexedDB');
    const name = `tm-toolchain-smoke-${Math.random().toString(36).slice(2)}`;
    const open = indexedDB.open(name, 1);
    open.onupgradeneeded = () => open.result.createObjectStore('kv');
    const db = await request(open);
    try {
      const tx = db.transaction('kv', 'readwrite');
      const committed = new Promise<void>((resolve, reject) => {
        tx.oncomplete = () => resolve();
        tx.onabort = () => reject(tx.error ?? new Error('transaction aborted'));
      });
      tx.objectStore('kv').put({ value: 42 }, 'answer');
      await committed;
      const read = (await request(db.transaction('kv').objectStore('kv').get('answer'))) as { value: number };
      assertEqual(read.value, 42, 'value read back');
    } finally {
      db.close();
      await request(indexedDB.deleteDatabase(name));
    }
  });
});
