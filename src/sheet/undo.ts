/**
 * Undo and redo as a pure history of inverse commands.
 *
 * Nothing is ever taken out of the worksheet's edit log: undoing an edit applies its inverse as a
 * new, ordinary edit (a new log entry), so the log keeps the whole history and the note can still
 * show that a value was entered and later withdrawn.
 *
 * How the app uses it (the grid only emits `tm-undo` / `tm-redo`; whoever applies commands keeps
 * the history, today the editing session in src/app/session.ts):
 * 1. The user does something (an edit, a paste, a new row...). Apply it, compute its inverse
 *    from the worksheet *before* the change (for cell edits: {@link inverseCellEdits}) and call
 *    `history = recordDone(history, inverse)`. This clears the redo side.
 * 2. On `tm-undo`: `const taken = takeUndo(history)`; if there is one, apply `taken.command` like
 *    any other command, compute *its* inverse and call `recordUndone(taken.history, inverse)`.
 * 3. On `tm-redo`: `takeRedo`, apply, then `recordRedone(taken.history, inverse)`.
 * The command type is the app's own (cell edits, row added or deleted, row time, columns...).
 *
 * Pure: no DOM.
 */
import type { Cell, Worksheet } from './model.js';

/** One cell edit: the value to store (null clears the cell). */
export interface CellEdit {
  rowId: string;
  key: string;
  cell: Cell | null;
}

/** A cell edit with the text the person typed (or pasted), for the edit log. */
export interface CellInputEdit extends CellEdit {
  input: string;
}

/** Undo and redo stacks of inverse commands, newest last. Never mutated: every call returns a new one. */
export interface UndoHistory<C> {
  readonly undo: readonly C[];
  readonly redo: readonly C[];
  /** Most undo steps kept; older ones are forgotten (the edit log still has them). */
  readonly limit: number;
}

export const DEFAULT_UNDO_LIMIT = 200;

export function emptyHistory<C>(limit = DEFAULT_UNDO_LIMIT): UndoHistory<C> {
  if (!Number.isInteger(limit) || limit < 1) throw new Error(`emptyHistory: limit must be a positive integer, got ${limit}`);
  return { undo: [], redo: [], limit };
}

function capped<C>(stack: readonly C[], limit: number): C[] {
  return stack.length > limit ? stack.slice(stack.length - limit) : [...stack];
}

/** After a new user action: remember how to undo it and forget what could be redone. */
export function recordDone<C>(history: UndoHistory<C>, inverse: C): UndoHistory<C> {
  return { undo: capped([...history.undo, inverse], history.limit), redo: [], limit: history.limit };
}

/** Takes the newest undo command to apply, or undefined when there is nothing to undo. */
export function takeUndo<C>(history: UndoHistory<C>): { history: UndoHistory<C>; command: C } | undefined {
  if (history.undo.length === 0) return undefined;
  const command = history.undo[history.undo.length - 1] as C;
  return { history: { ...history, undo: history.undo.slice(0, -1) }, command };
}

/** After applying an undo command: its inverse becomes the next redo. */
export function recordUndone<C>(history: UndoHistory<C>, inverse: C): UndoHistory<C> {
  return { ...history, redo: capped([...history.redo, inverse], history.limit) };
}

/** Takes the newest redo command to apply, or undefined when there is nothing to redo. */
export function takeRedo<C>(history: UndoHistory<C>): { history: UndoHistory<C>; command: C } | undefined {
  if (history.redo.length === 0) return undefined;
  const command = history.redo[history.redo.length - 1] as C;
  return { history: { ...history, redo: history.redo.slice(0, -1) }, command };
}

/** After applying a redo command: its inverse goes back on the undo side (redo stays as it is). */
export function recordRedone<C>(history: UndoHistory<C>, inverse: C): UndoHistory<C> {
  return { ...history, undo: capped([...history.undo, inverse], history.limit) };
}

export function canUndo<C>(history: UndoHistory<C>): boolean {
  return history.undo.length > 0;
}

export function canRedo<C>(history: UndoHistory<C>): boolean {
  return history.redo.length > 0;
}

/**
 * The edits that undo `edits` on `before` (the worksheet as it was before they were applied).
 * Edits are followed in order, so a cell edited twice in one batch returns to its first value;
 * the result is in reverse order, ready to apply as one batch.
 * @throws Error naming the row when an edit targets a row that does not exist (programmer error)
 */
export function inverseCellEdits(before: Worksheet, edits: readonly CellEdit[]): CellEdit[] {
  const current = new Map<string, Cell | null>();
  const rowIds = new Set(before.rows.map((r) => r.id));
  const cellsOf = new Map(before.rows.map((r) => [r.id, r.cells]));
  const inverse: CellEdit[] = [];
  for (const e of edits) {
    if (!rowIds.has(e.rowId)) throw new Error(`inverseCellEdits: no row "${e.rowId}" in worksheet "${before.id}"`);
    const slot = `${e.rowId}\u0000${e.key}`;
    const old = current.has(slot) ? (current.get(slot) ?? null) : (cellsOf.get(e.rowId)?.[e.key] ?? null);
    inverse.push({ rowId: e.rowId, key: e.key, cell: old });
    current.set(slot, e.cell);
  }
  return inverse.reverse();
}
