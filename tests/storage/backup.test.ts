// Node tests of the JSON backup: round trip, strict validation with paths, migration from an
// older version, import planning (never replace without a choice) and a fuzz of hostile files.
// The fuzz properties follow reference/reliability-security-performance.md §7 ("never throws on
// arbitrary input", round trip; zod strict objects reject a `__proto__` key and leave
// Object.prototype clean).
import 'fake-indexeddb/auto';
import { IDBFactory } from 'fake-indexeddb';
import fc from 'fast-check';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { FixedClock } from '../../src/sheet/clock.js';
import type { Worksheet } from '../../src/sheet/model.js';
import { setFacts } from '../../src/sheet/worksheet.js';
import {
  BACKUP_VERSION,
  backupFileName,
  backupToJson,
  createBackup,
  importBackup,
  migrateBackup,
  parseBackup,
  planImport,
  readBackup,
  resolveImport,
} from '../../src/storage/backup.js';
import type { ClashChoice } from '../../src/storage/backup.js';
import { openStore } from '../../src/storage/store.js';
import type { Store } from '../../src/storage/store.js';
import { MIN, T0, makeCtx, sampleWorksheet } from './fixtures.js';

const clock = new FixedClock(T0 + 90 * MIN);
let store: Store;
let counter = 0;

beforeEach(async () => {
  counter += 1;
  store = await openStore({ name: `tm-backup-test-${counter}`, idbFactory: new IDBFactory(), broadcast: false });
});

afterEach(() => {
  store.close();
});

function notebook(): Worksheet[] {
  const ctxA = makeCtx('a');
  const a = sampleWorksheet(ctxA, 'DEMO bed 3 (fictional)');
  const ctxB = makeCtx('b');
  let b = sampleWorksheet(ctxB, 'DEMO resus 1 (fictional)');
  b = setFacts(ctxB, b, {
    archived: true,
    useIdealWeight: true,
    timeZero: { time: '2026-03-01T07:30:00.000Z', offset: 60, basis: 'other', reason: 'handover from ambulance crew' },
  }).worksheet;
  return [a, b];
}

function clone<T>(value: T): T {
  return JSON.parse(JSON.stringify(value)) as T;
}

describe('export then import', () => {
  it('gives back exactly the same worksheets, edit log included', async () => {
    const original = notebook();
    for (const ws of original) expect((await store.create(ws)).ok).toBe(true);

    const { worksheets, unreadable } = await store.getAll();
    expect(unreadable).toEqual([]);
    const doc = createBackup(worksheets, clock);
    expect(doc).toMatchObject({ format: 'tidemark-backup', version: 1, exportedAt: '2026-03-01T09:30:00.000Z' });
    const text = backupToJson(doc);

    const read = parseBackup(text);
    if (!read.ok) throw new Error(read.problems.join('\n'));
    expect(read.doc).toStrictEqual(doc);
    expect(read.fromVersion).toBe(BACKUP_VERSION);
    expect(read.notes).toEqual([]);

    // Into an empty notebook (another device).
    const other = await openStore({ name: 'tm-backup-other', idbFactory: new IDBFactory(), broadcast: false });
    try {
      const outcome = await importBackup(other, text);
      if (!outcome.ok) throw new Error(JSON.stringify(outcome));
      expect(outcome.result.added.sort()).toEqual(original.map((w) => w.id).sort());
      for (const ws of original) expect(await other.get(ws.id)).toStrictEqual(ws);
    } finally {
      other.close();
    }
  });

  it('exports one worksheet on its own and names the file by its UTC export time', () => {
    const [a] = notebook();
    const doc = createBackup([a!], clock);
    expect(doc.worksheets).toHaveLength(1);
    expect(backupFileName(doc)).toBe('tidemark-backup-2026-03-01T0930Z.json');
  });
});

describe('validation', () => {
  function withDoc(edit: (doc: Record<string, unknown> & { worksheets: Record<string, unknown>[] }) => void): string {
    const doc = clone(createBackup(notebook(), clock)) as unknown as Record<string, unknown> & { worksheets: Record<string, unknown>[] };
    edit(doc);
    return JSON.stringify(doc);
  }

  it('reports every problem with its path', () => {
    const text = withDoc((doc) => {
      const rows = doc.worksheets[0]!['rows'] as Record<string, unknown>[];
      rows[2]!['time'] = '2026-03-01 08:05';
      (rows[0]!['cells'] as Record<string, Record<string, unknown>>)['sbp']!['colour'] = 'red';
      doc.worksheets[1]!['weightKg'] = 'eighty';
    });
    const read = parseBackup(text);
    if (read.ok) throw new Error('expected problems');
    expect(read.problems).toHaveLength(3);
    expect(read.problems.some((p) => p.startsWith('worksheets[0].rows[2].time: '))).toBe(true);
    expect(read.problems).toContain('worksheets[0].rows[0].cells.sbp: Unrecognized key: "colour"');
    expect(read.problems.some((p) => p.startsWith('worksheets[1].weightKg: '))).toBe(true);
  });

  it('says plainly what is wrong with a file that is not a backup', () => {
    expect(parseBackup('not json')).toMatchObject({ ok: false, problems: [expect.stringMatching(/^The file is not valid JSON/)] });
    expect(parseBackup('[1,2]')).toMatchObject({ ok: false, problems: [expect.stringMatching(/not a Tidemark backup/)] });
    expect(parseBackup('{"format":"something-else","version":1}')).toMatchObject({
      ok: false,
      problems: [expect.stringMatching(/^format: expected "tidemark-backup"/)],
    });
    const newer = withDoc((doc) => {
      doc['version'] = 2;
    });
    expect(parseBackup(newer)).toMatchObject({ ok: false, problems: [expect.stringMatching(/newer Tidemark.*version 2/)] });
    expect(parseBackup('x'.repeat(50), { maxChars: 10 })).toMatchObject({ ok: false, problems: [expect.stringMatching(/too large/)] });
  });

  it('refuses duplicate ids and sorts rows given out of time order, with a note', () => {
    const dup = withDoc((doc) => {
      doc.worksheets[1]!['id'] = doc.worksheets[0]!['id'];
    });
    const r = parseBackup(dup);
    if (r.ok) throw new Error('expected a problem');
    expect(r.problems[0]).toMatch(/^worksheets\[1\]\.id: ".*" is also the id of worksheets\[0\]$/);

    const unsorted = withDoc((doc) => {
      (doc.worksheets[0]!['rows'] as unknown[]).reverse();
    });
    const s = parseBackup(unsorted);
    if (!s.ok) throw new Error(s.problems.join('\n'));
    const times = s.doc.worksheets[0]!.rows.map((row) => row.time);
    expect(times).toEqual([...times].sort());
    expect(s.notes[0]).toMatch(/sorted/);
  });

  it('refuses a __proto__ key anywhere and leaves Object.prototype clean', () => {
    const [a] = notebook();
    const json = backupToJson(createBackup([a!], clock)).replace('"cells": {', '"cells": { "__proto__": { "polluted": "yes" },');
    const r = parseBackup(json);
    if (r.ok) throw new Error('expected a problem');
    expect(r.problems).toEqual(['worksheets[0].rows[0].cells.__proto__: this key is not allowed']);
    expect(({} as Record<string, unknown>)['polluted']).toBeUndefined();
    expect(Object.getOwnPropertyNames(Object.prototype)).not.toContain('polluted');
  });
});

describe('migration from an older backup version', () => {
  // Version 0, an earlier shape defined for this project: worksheets without `displayOffset`
  // and `useIdealWeight`. Written out literally, not produced by the current code.
  const v0 = {
    format: 'tidemark-backup',
    version: 0,
    exportedAt: '2025-11-02T10:00:00.000Z',
    worksheets: [
      {
        id: 'old-1',
        label: 'DEMO old bed 2 (fictional)',
        createdAt: '2025-11-02T06:00:00.000Z',
        updatedAt: '2025-11-02T07:10:00.000Z',
        rev: 2,
        archived: false,
        weightKg: 64,
        timeZero: { time: '2025-11-02T06:00:00.000Z', offset: -300, basis: 'recognition' },
        goalSets: ['sep1'],
        customGoals: [],
        derivedColumns: [],
        columns: ['map', 'lactate'],
        rows: [{ id: 'r1', time: '2025-11-02T06:20:00.000Z', offset: -300, cells: { lactate: { value: 3.1 } } }],
        log: [
          { id: 'e1', at: '2025-11-02T06:21:00.000Z', kind: 'row-add', rowId: 'r1', new: '2025-11-02T06:20:00.000Z' },
          { id: 'e2', at: '2025-11-02T06:21:00.000Z', kind: 'cell', rowId: 'r1', key: 'lactate', old: null, new: { value: 3.1 } },
        ],
      },
      {
        id: 'old-2',
        label: 'DEMO old bed 5 (fictional)',
        createdAt: '2025-11-02T08:00:00.000Z',
        updatedAt: '2025-11-02T08:00:00.000Z',
        rev: 0,
        archived: true,
        goalSets: [],
        customGoals: [],
        derivedColumns: [],
        columns: [],
        rows: [],
        log: [],
      },
    ],
  };

  it('upgrades version 0 to version 1 (display offset from time zero, actual weight)', () => {
    const r = migrateBackup(clone(v0));
    if (!r.ok) throw new Error(r.problems.join('\n'));
    expect(r.fromVersion).toBe(0);
    expect(r.doc.version).toBe(1);
    expect(r.doc.worksheets[0]).toStrictEqual({ ...v0.worksheets[0], displayOffset: -300, useIdealWeight: false });
    expect(r.doc.worksheets[1]).toStrictEqual({ ...v0.worksheets[1], displayOffset: 0, useIdealWeight: false });
    expect(r.notes[0]).toMatch(/-05:00/);
    // The same through the file reader.
    const read = parseBackup(JSON.stringify(v0));
    expect(read.ok && read.doc).toStrictEqual(r.doc);
  });

  it('validates version 0 with its own shape (paths reported, v1-only keys refused)', () => {
    const bad = clone(v0) as unknown as { worksheets: Record<string, unknown>[] };
    bad.worksheets[0]!['displayOffset'] = 60;
    bad.worksheets[1]!['rev'] = -1;
    const r = migrateBackup(bad);
    if (r.ok) throw new Error('expected problems');
    expect(r.problems).toContain('worksheets[0]: Unrecognized key: "displayOffset"');
    expect(r.problems.some((p) => p.startsWith('worksheets[1].rev: '))).toBe(true);
  });
});

describe('import planning', () => {
  async function setup(): Promise<{ a: Worksheet; b: Worksheet; text: string; changedA: Worksheet }> {
    const [a, b] = notebook() as [Worksheet, Worksheet];
    await store.create(a);
    // The backup holds an older, different copy of A (as on another device) and a new B.
    const changedA: Worksheet = { ...a, label: 'DEMO bed 3 from the other device (fictional)' };
    return { a, b, changedA, text: backupToJson(createBackup([changedA, b], clock)) };
  }

  it('marks ids already in the notebook as clashes and imports nothing without a choice', async () => {
    const { a, b, text } = await setup();
    const read = parseBackup(text);
    if (!read.ok) throw new Error('bad');
    const plan = planImport(read.doc, await store.list());
    expect(plan.items.map((i) => [i.id, i.status])).toEqual([
      [a.id, 'clash'],
      [b.id, 'new'],
    ]);
    expect(plan.items[0]!.existing).toMatchObject({ label: a.label, rev: a.rev });

    const outcome = await importBackup(store, text);
    expect(outcome).toMatchObject({ ok: false, reason: 'needs-choice' });
    if (outcome.ok || outcome.reason !== 'needs-choice') throw new Error('expected needs-choice');
    expect(outcome.problems[0]).toMatch(/already in this notebook; choose/);
    expect(await store.get(b.id)).toBeUndefined();
    expect(await store.get(a.id)).toStrictEqual(a);
  });

  it('import-as-new gives a fresh id and keeps everything else exactly', async () => {
    const { a, b, changedA, text } = await setup();
    const choices = new Map<string, ClashChoice>([[a.id, 'import-as-new']]);
    const outcome = await importBackup(store, text, choices, { newId: () => 'fresh-1' });
    if (!outcome.ok) throw new Error(JSON.stringify(outcome));
    expect(outcome.result.added.sort()).toEqual([b.id, 'fresh-1'].sort());
    expect(await store.get(a.id)).toStrictEqual(a);
    expect(await store.get('fresh-1')).toStrictEqual({ ...changedA, id: 'fresh-1' });
    expect(await store.get(b.id)).toStrictEqual(b);
  });

  it('replace overwrites only the chosen worksheet; skip leaves it', async () => {
    const { a, b, changedA, text } = await setup();
    const replaced = await importBackup(store, text, new Map<string, ClashChoice>([[a.id, 'replace']]));
    if (!replaced.ok) throw new Error(JSON.stringify(replaced));
    expect(replaced.result.replaced).toEqual([a.id]);
    expect(await store.get(a.id)).toStrictEqual({ ...changedA, rev: a.rev + 1 });
    expect(await store.get(b.id)).toStrictEqual(b);

    await store.remove(b.id);
    const skipped = await importBackup(store, text, new Map<string, ClashChoice>([[a.id, 'skip']]));
    if (!skipped.ok) throw new Error(JSON.stringify(skipped));
    expect(skipped.skipped).toEqual([a.id]);
    expect((await store.get(a.id))?.label).toBe(changedA.label);
  });

  it('an id that appears between planning and writing is refused, not overwritten', async () => {
    const { b, text } = await setup();
    const read = parseBackup(text);
    if (!read.ok) throw new Error('bad');
    const plan = planImport(read.doc, { summaries: [], unreadable: [] });
    const resolved = resolveImport(plan, new Map());
    if (!resolved.ok) throw new Error(resolved.problems.join());
    // Meanwhile another tab stores B.
    await store.create({ ...b, label: 'DEMO made meanwhile (fictional)' });
    const result = await store.putAll(resolved.worksheets, { replace: resolved.replace });
    expect(result.ok).toBe(false);
    expect((await store.get(b.id))?.label).toBe('DEMO made meanwhile (fictional)');
  });
});

describe('hostile and malformed backups (fuzz)', () => {
  const base = notebook()[0]!;
  const baseDoc = createBackup([base], clock);
  const baseJson = backupToJson(baseDoc);
  const protoNames = Object.getOwnPropertyNames(Object.prototype).sort();

  async function snapshot(): Promise<string> {
    const [all, listing] = await Promise.all([store.getAll(), store.list()]);
    return JSON.stringify([all, listing]);
  }

  function prototypeClean(): void {
    expect(Object.getOwnPropertyNames(Object.prototype).sort()).toEqual(protoNames);
    expect(({} as Record<string, unknown>)['polluted']).toBeUndefined();
  }

  /** Imports with no choices and checks the invariants; returns nothing, throws on a violation. */
  async function check(text: string, before: string): Promise<void> {
    const outcome = await importBackup(store, text);
    prototypeClean();
    if (!outcome.ok) {
      expect(await snapshot()).toBe(before);
      if (outcome.reason === 'invalid') expect(outcome.problems.length).toBeGreaterThan(0);
      return;
    }
    // A valid file may only have added worksheets with new ids; the existing one is untouched.
    expect(outcome.result.replaced).toEqual([]);
    expect(await store.get(base.id)).toStrictEqual(base);
    for (const id of outcome.result.added) await store.remove(id);
    expect(await snapshot()).toBe(before);
  }

  type Json = null | boolean | number | string | Json[] | { [key: string]: Json };

  /** Every (container, key) position in a JSON value, as paths. */
  function positions(value: Json, path: (string | number)[] = [], out: (string | number)[][] = []): (string | number)[][] {
    if (Array.isArray(value)) value.forEach((v, i) => positions(v, [...path, i], out));
    else if (value !== null && typeof value === 'object') {
      for (const [k, v] of Object.entries(value)) positions(v, [...path, k], out);
    }
    out.push(path);
    return out;
  }

  const hostileValue: fc.Arbitrary<Json> = fc.oneof(
    fc.jsonValue({ maxDepth: 2 }) as fc.Arbitrary<Json>,
    fc.string({ maxLength: 80 }),
    fc.constantFrom<Json>(
      null,
      -1,
      0,
      1e308,
      -1e308,
      1.5,
      '',
      '__proto__',
      'constructor',
      '2026-13-45T99:99:99Z',
      '2026-03-01T08:00:00+01:00',
      'x'.repeat(70),
      'y'.repeat(5_000),
      { __proto__: null, polluted: 'yes' } as unknown as Json,
      [[[[[[[[[[[]]]]]]]]]]],
    ),
    fc.integer(),
    fc.double({ noNaN: true, noDefaultInfinity: true }),
  );

  const mutation = fc.record({
    at: fc.nat(),
    op: fc.constantFrom('set', 'delete', 'add-key'),
    key: fc.oneof(fc.string({ maxLength: 12 }), fc.constantFrom('__proto__', 'constructor', 'prototype', 'polluted')),
    value: hostileValue,
  });

  function mutate(muts: readonly { at: number; op: string; key: string; value: Json }[]): string {
    const doc = JSON.parse(baseJson) as Json;
    for (const m of muts) {
      const all = positions(doc);
      const path = all[m.at % all.length]!;
      if (path.length === 0) continue;
      let container = doc;
      for (const p of path.slice(0, -1)) container = (container as Record<string | number, Json>)[p]!;
      const last = path[path.length - 1]!;
      const target = (container as Record<string | number, Json>)[last];
      if (m.op === 'delete') {
        if (Array.isArray(container)) container.splice(Number(last), 1);
        else delete (container as Record<string, Json>)[String(last)];
      } else if (m.op === 'add-key' && target !== null && typeof target === 'object' && !Array.isArray(target)) {
        // defineProperty: an own key even for "__proto__", as JSON.parse would make it.
        Object.defineProperty(target, m.key, { value: m.value, enumerable: true, configurable: true, writable: true });
      } else {
        Object.defineProperty(container, last, { value: m.value, enumerable: true, configurable: true, writable: true });
      }
    }
    return JSON.stringify(doc);
  }

  it('never throws, never changes the store, never pollutes Object.prototype (2,600 documents)', async () => {
    await store.create(base);
    const before = await snapshot();

    // 1. Arbitrary JSON values.
    await fc.assert(
      fc.asyncProperty(fc.jsonValue(), async (value) => check(JSON.stringify(value) ?? 'null', before)),
      { numRuns: 800 },
    );
    // 2. Valid documents with 1-4 hostile mutations (wrong types, deleted keys, extra keys, __proto__).
    await fc.assert(
      fc.asyncProperty(fc.array(mutation, { minLength: 1, maxLength: 4 }), async (muts) => check(mutate(muts), before)),
      { numRuns: 1200 },
    );
    // 3. A "__proto__" member spliced into the text at any object.
    const braces = [...baseJson.matchAll(/\{/g)].map((m) => m.index);
    await fc.assert(
      fc.asyncProperty(fc.nat(), hostileValue, async (i, value) => {
        const at = braces[i % braces.length]! + 1;
        const text = `${baseJson.slice(0, at)}"__proto__": ${JSON.stringify(value) ?? 'null'},${baseJson.slice(at)}`;
        await check(text, before);
      }),
      { numRuns: 400 },
    );
    // 4. Huge strings in the places people type (label, cell text, note, ids).
    const places = ['label', 'id', 'cells', 'note', 'reason'];
    await fc.assert(
      fc.asyncProperty(fc.constantFrom(...places), fc.constantFrom(61, 2_001, 200_000, 3_000_000), async (place, n) => {
        const huge = 'z'.repeat(n);
        const doc = JSON.parse(baseJson) as { worksheets: Record<string, unknown>[] };
        const ws = doc.worksheets[0]!;
        if (place === 'label' || place === 'id') ws[place] = huge;
        else if (place === 'cells') (ws['rows'] as { cells: Record<string, unknown> }[])[0]!.cells['note'] = { value: huge };
        else if (place === 'note') (ws['log'] as Record<string, unknown>[])[0]!['note'] = huge;
        else ws['timeZero'] = { time: '2026-03-01T07:40:00.000Z', offset: 60, basis: 'other', reason: huge };
        await check(JSON.stringify(doc), before);
      }),
      { numRuns: 200 },
    );
    prototypeClean();
  }, 120_000);

  it('readBackup never throws on arbitrary JavaScript values', () => {
    fc.assert(
      fc.property(
        fc.anything({ withNullPrototype: true, withObjectString: true, withBigInt: true, withMap: true, withSet: true }),
        (value) => {
          const r = readBackup(value);
          expect(typeof r.ok).toBe('boolean');
        },
      ),
      { numRuns: 500 },
    );
    prototypeClean();
  });
});
