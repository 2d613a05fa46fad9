/**
 * The editing session of one worksheet: applies commands from the screen, writes each change to
 * the store before calling it saved, keeps undo/redo, and recovers from conflicts and failed
 * writes without losing what the user typed. No DOM: tested in Node against a fake store.
 *
 * Saving model:
 * - `saved` is the last version the store acknowledged (after IndexedDB's `tx.done`).
 * - `view` is what the screen shows: `saved` plus edits still being written or that failed.
 * - Commits run one after another, each against the rev of the version before it, so the store
 *   can detect a change made in another tab (a rev mismatch) and we re-apply on top of it.
 */
import type { Clock } from '../sheet/clock.js';
import type { Store } from '../storage/store.js';
import type { CustomGoal, DerivedColumn, Row, Worksheet } from '../sheet/model.js';
import {
  addRow,
  deleteRow,
  factsOf,
  insertRow,
  setCells,
  setColumns,
  setCustomGoals,
  setDerivedColumns,
  setFacts,
  setRowTime,
  type CellEdit,
  type Change,
  type Ctx,
  type Facts,
} from '../sheet/worksheet.js';

/** The part of the store a session needs. */
export type SessionStore = Pick<Store, 'commit'>;

/** A command the user can undo: applying it gives the inverse command. */
type Command =
  | { type: 'cells'; edits: CellEdit[] }
  | { type: 'add-row'; row: Row; restored: boolean }
  | { type: 'delete-row'; rowId: string }
  | { type: 'row-time'; rowId: string; time: string; offset: number }
  | { type: 'facts'; patch: Partial<Facts> }
  | { type: 'columns'; columns: string[] }
  | { type: 'derived-columns'; columns: DerivedColumn[] }
  | { type: 'custom-goals'; goals: CustomGoal[] }
  /** Several commands applied as one change and undone as one step (a paste). */
  | { type: 'batch'; commands: Command[] };

export type SaveState =
  { kind: 'saved' } | { kind: 'saving' } | { kind: 'failed'; reason: 'quota' | 'failed' | 'closed' | 'missing'; message: string };

export interface SessionSnapshot {
  worksheet: Worksheet;
  save: SaveState;
  /** Cells not yet acknowledged by the store, keyed `${rowId}:${key}`. */
  pending: ReadonlyMap<string, 'saving' | 'failed'>;
  canUndo: boolean;
  canRedo: boolean;
  /** Set when an edit was merged with a change from another tab. */
  notice?: string;
}

const UNDO_LIMIT = 200;

/**
 * How many times one edit is re-applied on top of another tab's newer version before the session
 * gives up and asks the user to retry. Every conflict means the other tab saved something, so the
 * notebook as a whole always moves on; the limit only bounds how long one tab waits while another
 * keeps writing (found in tests/reliability/two-tabs.test.ts: with 4 attempts, two tabs writing at
 * once made one of them give up).
 */
export const CONFLICT_ATTEMPTS = 30;

/** Pause before re-applying after the n-th conflict in a row: lets the other tab's queued writes through. */
function conflictPause(n: number): Promise<void> {
  return new Promise((resolve) => setTimeout(resolve, Math.min(n, 10) * 10));
}

export class WorksheetSession {
  private saved: Worksheet;
  private view: Worksheet;
  private readonly ctx: Ctx;
  private queue: Promise<void> = Promise.resolve();
  /** Commands shown on screen but not yet acknowledged by the store, oldest first. */
  private readonly outstanding: Command[] = [];
  private failure: Extract<SaveState, { kind: 'failed' }> | undefined;
  private undoStack: Command[] = [];
  private redoStack: Command[] = [];
  private notice: string | undefined;
  private readonly listeners = new Set<(s: SessionSnapshot) => void>();

  constructor(
    worksheet: Worksheet,
    private readonly store: SessionStore,
    clock: Clock,
    newId?: () => string,
  ) {
    this.saved = worksheet;
    this.view = worksheet;
    this.ctx = newId ? { clock, newId } : { clock };
  }

  /** What the screen shows: the saved version plus outstanding edits. */
  get worksheet(): Worksheet {
    return this.view;
  }

  /** The last version the store acknowledged. */
  get savedWorksheet(): Worksheet {
    return this.saved;
  }

  snapshot(): SessionSnapshot {
    const pending = new Map<string, 'saving' | 'failed'>();
    for (const cmd of this.outstanding) {
      for (const k of cellKeys(cmd)) pending.set(k, this.failure ? 'failed' : 'saving');
    }
    const s: SessionSnapshot = {
      worksheet: this.view,
      save: this.failure ?? (this.outstanding.length > 0 ? { kind: 'saving' } : { kind: 'saved' }),
      pending,
      canUndo: this.undoStack.length > 0,
      canRedo: this.redoStack.length > 0,
    };
    if (this.notice) s.notice = this.notice;
    return s;
  }

  subscribe(fn: (s: SessionSnapshot) => void): () => void {
    this.listeners.add(fn);
    return () => this.listeners.delete(fn);
  }

  private emit(): void {
    const s = this.snapshot();
    for (const fn of this.listeners) fn(s);
  }

  /** Applies a command to a worksheet; returns the change and the command that undoes it. */
  private apply(ws: Worksheet, cmd: Command): { change: Change; inverse: Command } {
    switch (cmd.type) {
      case 'cells': {
        const inverse: CellEdit[] = cmd.edits.map((e) => ({
          rowId: e.rowId,
          key: e.key,
          cell: ws.rows.find((r) => r.id === e.rowId)?.cells[e.key] ?? null,
        }));
        return { change: setCells(this.ctx, ws, cmd.edits), inverse: { type: 'cells', edits: inverse.reverse() } };
      }
      case 'add-row':
        return { change: insertRow(this.ctx, ws, cmd.row, cmd.restored), inverse: { type: 'delete-row', rowId: cmd.row.id } };
      case 'delete-row': {
        const row = ws.rows.find((r) => r.id === cmd.rowId);
        if (!row) throw new Error(`the row was deleted`);
        return { change: deleteRow(this.ctx, ws, cmd.rowId), inverse: { type: 'add-row', row, restored: true } };
      }
      case 'row-time': {
        const row = ws.rows.find((r) => r.id === cmd.rowId);
        if (!row) throw new Error(`the row was deleted`);
        return {
          change: setRowTime(this.ctx, ws, cmd.rowId, cmd.time, cmd.offset),
          inverse: { type: 'row-time', rowId: row.id, time: row.time, offset: row.offset },
        };
      }
      case 'facts': {
        const before = factsOf(ws);
        const patch = Object.fromEntries(Object.keys(cmd.patch).map((k) => [k, before[k as keyof Facts]])) as Partial<Facts>;
        return { change: setFacts(this.ctx, ws, cmd.patch), inverse: { type: 'facts', patch } };
      }
      case 'columns':
        return { change: setColumns(this.ctx, ws, cmd.columns), inverse: { type: 'columns', columns: ws.columns } };
      case 'derived-columns':
        return {
          change: setDerivedColumns(this.ctx, ws, cmd.columns),
          inverse: { type: 'derived-columns', columns: ws.derivedColumns },
        };
      case 'custom-goals':
        return { change: setCustomGoals(this.ctx, ws, cmd.goals), inverse: { type: 'custom-goals', goals: ws.customGoals } };
      case 'batch': {
        // One stored version with every entry of the parts: written in one transaction.
        let next = ws;
        const entries: Change['entries'] = [];
        const inverses: Command[] = [];
        for (const part of cmd.commands) {
          const r = this.apply(next, part);
          next = r.change.worksheet;
          entries.push(...r.change.entries);
          inverses.unshift(r.inverse);
        }
        return {
          change: { worksheet: { ...next, rev: ws.rev + 1 }, entries },
          inverse: { type: 'batch', commands: inverses },
        };
      }
    }
  }

  /** The view is always the saved version with the outstanding commands applied in order. */
  private rebuildView(): void {
    let ws = this.saved;
    for (const cmd of this.outstanding) {
      try {
        ws = this.apply(ws, cmd).change.worksheet;
      } catch {
        // The command no longer applies on screen (its row is gone); its write will say so.
      }
    }
    this.view = ws;
  }

  /**
   * Runs a command: the screen shows it at once, then it is written. Resolves true when the
   * store acknowledged it, false when it could not be written (it stays on screen, marked).
   */
  private run(cmd: Command, record: 'do' | 'undo' | 'redo'): Promise<boolean> {
    const { change, inverse } = this.apply(this.view, cmd);
    this.view = change.worksheet;
    if (record === 'do') {
      this.undoStack.push(inverse);
      if (this.undoStack.length > UNDO_LIMIT) this.undoStack.shift();
      this.redoStack = [];
    } else if (record === 'undo') {
      this.redoStack.push(inverse);
    } else {
      this.undoStack.push(inverse);
    }
    this.outstanding.push(cmd);
    this.notice = undefined;
    this.emit();
    const result = this.queue.then(() => this.write(cmd));
    this.queue = result.then(() => undefined);
    return result;
  }

  /** Writes one outstanding command against the last saved version. */
  private async write(cmd: Command): Promise<boolean> {
    if (this.failure) {
      // An earlier write failed: this one waits with it, on screen, until the user retries.
      this.emit();
      return false;
    }
    const ok = await this.writeNow(cmd);
    this.rebuildView();
    this.emit();
    return ok;
  }

  private async writeNow(cmd: Command): Promise<boolean> {
    for (let attempt = 0; attempt < CONFLICT_ATTEMPTS; attempt++) {
      if (attempt > 1) await conflictPause(attempt - 1);
      let change: Change;
      try {
        change = this.apply(this.saved, cmd).change;
      } catch (e) {
        // The command no longer applies to the stored version (changed in another tab).
        this.notice = `An edit could not be applied because ${(e as Error).message} in another tab.`;
        this.dropOutstanding(cmd);
        return false;
      }
      const res = await this.store.commit(change, this.saved.rev);
      if (res.ok) {
        this.saved = change.worksheet;
        this.dropOutstanding(cmd);
        return true;
      }
      if (res.reason !== 'conflict') {
        const reason = res.reason === 'invalid' ? 'failed' : res.reason;
        this.failure = { kind: 'failed', reason, message: res.message };
        return false;
      }
      // Another tab saved first: take its version and re-apply this edit on top of it. Both
      // values stay in the edit log (theirs in their entry, ours in this one).
      this.saved = res.current;
      this.notice = 'This worksheet was also changed in another tab; both changes are kept in the edit log.';
    }
    this.failure = { kind: 'failed', reason: 'failed', message: 'The worksheet keeps changing in another tab.' };
    return false;
  }

  private dropOutstanding(cmd: Command): void {
    const i = this.outstanding.indexOf(cmd);
    if (i >= 0) this.outstanding.splice(i, 1);
  }

  /** Tries again to write what failed, in order. Resolves true when everything is saved. */
  retry(): Promise<boolean> {
    const result = this.queue.then(async () => {
      this.failure = undefined;
      let ok = true;
      for (const cmd of [...this.outstanding]) {
        if (!(await this.writeNow(cmd))) {
          ok = this.failure === undefined && ok;
          if (this.failure) break;
        }
      }
      this.rebuildView();
      this.emit();
      return ok && this.outstanding.length === 0;
    });
    this.queue = result.then(() => undefined);
    return result;
  }

  /** A newer version was stored by another tab: show it, keeping outstanding edits on top. */
  external(current: Worksheet): void {
    if (current.rev <= this.saved.rev) return;
    this.saved = current;
    this.rebuildView();
    this.emit();
  }

  editCells(edits: CellEdit[]): Promise<boolean> {
    if (edits.length === 0) return Promise.resolve(true);
    return this.run({ type: 'cells', edits }, 'do');
  }

  /** Adds a row (optionally with cells); returns its id at once. */
  addRow(time: string, offset: number, cells: Row['cells'] = {}): { rowId: string; saved: Promise<boolean> } {
    const { rowId, worksheet } = addRow(this.ctx, this.view, time, offset, cells);
    const row = worksheet.rows.find((r) => r.id === rowId)!;
    return { rowId, saved: this.run({ type: 'add-row', row, restored: false }, 'do') };
  }

  /**
   * A confirmed paste: new rows with their cells and edits to existing rows, stored as one change
   * and undone as one step.
   */
  paste(newRows: readonly { time: string; offset: number; cells: Row['cells'] }[], edits: CellEdit[]): Promise<boolean> {
    const commands: Command[] = [];
    let ws = this.view;
    for (const r of newRows) {
      const added = addRow(this.ctx, ws, r.time, r.offset, r.cells);
      ws = added.worksheet;
      commands.push({ type: 'add-row', row: ws.rows.find((x) => x.id === added.rowId)!, restored: false });
    }
    if (edits.length > 0) commands.push({ type: 'cells', edits });
    if (commands.length === 0) return Promise.resolve(true);
    return this.run({ type: 'batch', commands }, 'do');
  }

  deleteRow(rowId: string): Promise<boolean> {
    return this.run({ type: 'delete-row', rowId }, 'do');
  }

  setRowTime(rowId: string, time: string, offset: number): Promise<boolean> {
    return this.run({ type: 'row-time', rowId, time, offset }, 'do');
  }

  setFacts(patch: Partial<Facts>): Promise<boolean> {
    return this.run({ type: 'facts', patch }, 'do');
  }

  setColumns(columns: string[]): Promise<boolean> {
    return this.run({ type: 'columns', columns }, 'do');
  }

  /**
   * The worksheet's own calculated columns (mathjs expressions over measure keys). A new column is
   * shown in the grid at once; a removed one leaves it. One change, undone in one step.
   */
  setDerivedColumns(columns: DerivedColumn[]): Promise<boolean> {
    const ws = this.view;
    const keys = columns.map((c) => c.key);
    const removed = new Set(ws.derivedColumns.map((c) => c.key).filter((k) => !keys.includes(k)));
    const visible = ws.columns.filter((k) => !removed.has(k));
    for (const k of keys) if (!visible.includes(k)) visible.push(k);
    return this.run(
      {
        type: 'batch',
        commands: [
          { type: 'derived-columns', columns },
          { type: 'columns', columns: visible },
        ],
      },
      'do',
    );
  }

  /** The worksheet's own goals. */
  setCustomGoals(goals: CustomGoal[]): Promise<boolean> {
    return this.run({ type: 'custom-goals', goals }, 'do');
  }

  undo(): Promise<boolean> {
    const cmd = this.undoStack.pop();
    if (!cmd) return Promise.resolve(false);
    return this.run(cmd, 'undo');
  }

  redo(): Promise<boolean> {
    const cmd = this.redoStack.pop();
    if (!cmd) return Promise.resolve(false);
    return this.run(cmd, 'redo');
  }

  /** Resolves when every queued write has finished. */
  settled(): Promise<void> {
    return this.queue;
  }
}

function cellKeys(cmd: Command): string[] {
  if (cmd.type === 'batch') return cmd.commands.flatMap(cellKeys);
  if (cmd.type === 'add-row') return Object.keys(cmd.row.cells).map((k) => `${cmd.row.id}:${k}`);
  return cmd.type === 'cells' ? cmd.edits.map((e) => `${e.rowId}:${e.key}`) : [];
}
