// Code that runs inside the app's page (passed to page.evaluate), shared by the reliability tests.
// It reaches the app only through what the screen has: the <tm-app> element, its <tm-grid> (the
// worksheet shown, the per-cell "saving"/"not saved" marks) and the grid's `tm-edit` event, the
// same event a key press in a cell sends. Stored data is read with plain IndexedDB calls, not with
// the app's store, so the check does not trust the code it checks.

/** One edit sent to the app; `acked` once the screen showed it saved (value shown, no mark). */
export interface SentEdit {
  i: number;
  rowId: string;
  key: string;
  value: number | string | null;
  typed: boolean;
  acked: boolean;
}

export interface KeySpec {
  key: string;
  min: number;
  max: number;
  /** Decimal places of the random values. */
  dp: number;
}

export interface StoredState {
  id: string;
  record: { rev: number; logCount: number; rows: { id: string; cells: Record<string, { value: unknown }> }[] } & Record<string, unknown>;
  log: { worksheetId: string; seq: number; entry: { kind: string; rowId?: string; key?: string; new?: unknown } }[];
  summaryRev: number | undefined;
}

/**
 * Installs `window.__drv`, which sends random cell edits through the grid's `tm-edit` event on a
 * timer until `stop()`; `stop()` freezes the list and works out, from the screen alone, which
 * edits the app acknowledged. A cell is only edited again once its last edit was acknowledged,
 * so "shows the value without a saving mark" identifies one edit.
 */
export function installDriver(arg: {
  seed: number;
  keys: KeySpec[];
  gapMs: number;
  noteEvery: number;
  clearEvery: number;
  /** At most this many edits sent and not yet acknowledged (a typist a few edits ahead of the disk). */
  maxInFlight: number;
}): void {
  let a = arg.seed >>> 0;
  const rnd = (): number => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
  type Grid = HTMLElement & {
    worksheet: { rows: { id: string; cells: Record<string, { value: unknown } | undefined> }[] };
    pending: ReadonlyMap<string, string>;
  };
  const grid = (): Grid => document.querySelector('tm-app')!.shadowRoot!.querySelector('tm-grid') as Grid;
  const sent: SentEdit[] = [];
  let stopped = false;

  const shows = (e: SentEdit): boolean => {
    const g = grid();
    if (g.pending.has(`${e.rowId}:${e.key}`)) return false;
    const cell = g.worksheet.rows.find((r) => r.id === e.rowId)?.cells[e.key];
    return e.value === null ? cell === undefined : cell !== undefined && cell.value === e.value;
  };
  const check = (): void => {
    for (const e of sent) if (!e.acked && shows(e)) e.acked = true;
  };

  const sendOne = (): void => {
    check();
    const g = grid();
    const busy = new Set(sent.filter((e) => !e.acked).map((e) => `${e.rowId}:${e.key}`));
    if (busy.size >= arg.maxInFlight) return;
    for (let attempt = 0; attempt < 20; attempt++) {
      const row = g.worksheet.rows[Math.floor(rnd() * g.worksheet.rows.length)]!;
      const n = sent.length + 1;
      const spec = arg.keys[Math.floor(rnd() * arg.keys.length)]!;
      let key = spec.key;
      let value: number | string | null;
      if (n % arg.noteEvery === 0) {
        key = 'note';
        value = `edit ${n} ${Math.floor(rnd() * 1e6)}`;
      } else if (n % arg.clearEvery === 0) {
        value = null;
      } else {
        const f = 10 ** spec.dp;
        value = Math.round((spec.min + rnd() * (spec.max - spec.min)) * f) / f;
      }
      const current = row.cells[key];
      if (busy.has(`${row.id}:${key}`)) continue;
      if (value === null ? current === undefined : current?.value === value) continue;
      sent.push({ i: sent.length, rowId: row.id, key, value, typed: false, acked: false });
      const cell = value === null ? null : { value };
      g.dispatchEvent(
        new CustomEvent('tm-edit', {
          detail: { edits: [{ rowId: row.id, key, cell, input: value === null ? '' : String(value) }] },
          bubbles: true,
          composed: true,
        }),
      );
      return;
    }
  };

  const tick = (): void => {
    if (stopped) return;
    // Mostly single edits, sometimes a burst (a fast typist, a paste of several cells).
    const burst = rnd() < 0.15 ? 2 + Math.floor(rnd() * 4) : 1;
    for (let i = 0; i < burst; i++) sendOne();
    setTimeout(tick, rnd() * arg.gapMs);
  };

  (window as unknown as { __drv: unknown }).__drv = {
    start: () => setTimeout(tick, 0),
    stop: (): SentEdit[] => {
      stopped = true;
      check();
      return sent.map((e) => ({ ...e }));
    },
    /** For typed edits: record one the test typed, so acknowledgement is tracked the same way. */
    record: (rowId: string, key: string, value: number): void => {
      sent.push({ i: sent.length, rowId, key, value, typed: true, acked: false });
    },
    busy: (): string[] => {
      check();
      return sent.filter((e) => !e.acked).map((e) => `${e.rowId}:${e.key}`);
    },
  };
}

/** Reads the shown worksheet's stored record, its edit log and its summary with plain IndexedDB. */
export async function readStored(): Promise<StoredState> {
  type Grid = HTMLElement & { worksheet: { id: string } };
  const id = (document.querySelector('tm-app')!.shadowRoot!.querySelector('tm-grid') as Grid).worksheet.id;
  const db = await new Promise<IDBDatabase>((resolve, reject) => {
    const r = indexedDB.open('tidemark');
    r.onsuccess = () => resolve(r.result);
    r.onerror = () => reject(r.error ?? new Error('IndexedDB open failed'));
  });
  try {
    const tx = db.transaction(['worksheets', 'log', 'summaries'], 'readonly');
    const get = <T>(req: IDBRequest<T>): Promise<T> =>
      new Promise((resolve, reject) => {
        req.onsuccess = () => resolve(req.result);
        req.onerror = () => reject(req.error ?? new Error('IndexedDB request failed'));
      });
    const [record, log, summary] = await Promise.all([
      get<unknown>(tx.objectStore('worksheets').get(id)),
      get<unknown[]>(tx.objectStore('log').getAll(IDBKeyRange.bound([id, 0], [id, Infinity]))),
      get<unknown>(tx.objectStore('summaries').get(id)),
    ]);
    return {
      id,
      record: record as StoredState['record'],
      log: log as StoredState['log'],
      summaryRev: (summary as { rev?: number } | undefined)?.rev,
    };
  } finally {
    db.close();
  }
}

/** What the app shows after it loaded: the worksheet's rev and rows. */
export function shownWorksheet(): { id: string; rev: number; rows: unknown[] } {
  type Grid = HTMLElement & { worksheet: { id: string; rev: number; rows: unknown[] } };
  const ws = (document.querySelector('tm-app')!.shadowRoot!.querySelector('tm-grid') as Grid).worksheet;
  return { id: ws.id, rev: ws.rev, rows: ws.rows };
}

/** Focuses one cell of the grid (for typing into it with the real keyboard). */
export function focusCell(arg: { rowId: string; key: string }): boolean {
  const grid = document.querySelector('tm-app')!.shadowRoot!.querySelector('tm-grid')!;
  const cell = grid.shadowRoot!.querySelector<HTMLElement>(`[data-row="${arg.rowId}"][data-col="${arg.key}"]`);
  if (!cell) return false;
  cell.focus();
  return grid.shadowRoot!.activeElement === cell;
}

/** Sends one cell edit the way the grid does (its `tm-edit` event). */
export function sendEdit(arg: { rowId: string; key: string; value: number | string | null }): void {
  const grid = document.querySelector('tm-app')!.shadowRoot!.querySelector('tm-grid')!;
  grid.dispatchEvent(
    new CustomEvent('tm-edit', {
      detail: {
        edits: [{ rowId: arg.rowId, key: arg.key, cell: arg.value === null ? null : { value: arg.value }, input: String(arg.value ?? '') }],
      },
      bubbles: true,
      composed: true,
    }),
  );
}

/** Resolves with Date.now() once the grid shows `value` in the cell with no saving mark. */
export function whenShown(arg: { rowId: string; key: string; value: number | string; timeoutMs: number }): Promise<number> {
  type Grid = HTMLElement & {
    worksheet?: { rows: { id: string; cells: Record<string, { value: unknown } | undefined> }[] };
    pending?: ReadonlyMap<string, string>;
  };
  const started = Date.now();
  return new Promise((resolve, reject) => {
    const poll = (): void => {
      const grid = document.querySelector('tm-app')?.shadowRoot?.querySelector('tm-grid') as Grid | null | undefined;
      const cell = grid?.worksheet?.rows.find((r) => r.id === arg.rowId)?.cells[arg.key];
      if (cell?.value === arg.value && !grid?.pending?.has(`${arg.rowId}:${arg.key}`)) return resolve(Date.now());
      if (Date.now() - started > arg.timeoutMs)
        return reject(new Error(`cell ${arg.rowId}/${arg.key} did not show ${String(arg.value)} within ${arg.timeoutMs} ms`));
      setTimeout(poll, 5);
    };
    poll();
  });
}

/** The text of every banner and the save badge of <tm-app>. */
export function appMessages(): { banners: string[]; save: string } {
  const root = document.querySelector('tm-app')?.shadowRoot;
  const norm = (t: string | null | undefined) => (t ?? '').replace(/\s+/g, ' ').trim();
  return {
    banners: [...(root?.querySelectorAll('.banner') ?? [])].map((b) => norm(b.textContent)),
    save: norm(root?.querySelector('.save')?.textContent),
  };
}
