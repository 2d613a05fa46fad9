/**
 * The worksheet grid's keyboard model as one pure function, after the WAI-ARIA Authoring
 * Practices data-grid pattern (https://www.w3.org/WAI/ARIA/apg/patterns/grid/):
 * (grid size, active cell, mode, key + modifiers) -> (new active cell, new mode, command).
 *
 * `<tm-grid>` only applies the result: it moves the roving tabindex and focus, opens or closes
 * the cell editor and turns the command into an event. Keeping the decision here lets the whole
 * key table be tested in Node without a browser.
 *
 * Positions count data rows and columns from 0 in display order. Column 0 is the row header
 * (the row's time); columns 1.. are the visible measures. The header row with the column names
 * is not part of navigation: its cells have no function of their own, which the pattern allows.
 *
 * Choices the pattern leaves to the author (documented here once):
 * - No wrapping anywhere: at an edge the active cell stays put (APG: wrapping disorients in data grids).
 * - Enter while editing commits and moves one row down (Shift+Enter: up); Tab commits and moves
 *   right (Shift+Tab: left), staying put at the edge, so Tab never leaves the grid mid-edit.
 * - F2 while editing commits and returns to navigation in the same cell (the pattern's toggle).
 * - Escape while editing cancels: the cell keeps its stored value.
 * - Delete/Backspace in navigation mode clears the cell as an ordinary edit (logged, undoable);
 *   on the row header it asks to delete the row (the element confirms first).
 * - Typing a printable character in navigation mode starts editing with that character.
 *
 * Pure: no DOM.
 */

/** Size of the navigable area. */
export interface GridSize {
  /** Number of data rows. */
  readonly rows: number;
  /** Number of columns including the row-header column (so at least 1). */
  readonly cols: number;
  /** Rows moved by Page Up / Page Down: about one visible page, at least 1. */
  readonly pageRows: number;
}

/** A cell position, 0-based, in display order. */
export interface CellPos {
  readonly row: number;
  readonly col: number;
}

/** `navigate`: keys move between cells. `edit`: an editor in the active cell owns the keys. */
export type GridMode = 'navigate' | 'edit';

/** What the element needs from a keyboard event. */
export interface KeyInput {
  /** `KeyboardEvent.key`. */
  readonly key: string;
  /** `KeyboardEvent.code`, used for Alt+N where the key value depends on the layout. */
  readonly code?: string;
  readonly ctrl?: boolean;
  readonly meta?: boolean;
  readonly shift?: boolean;
  readonly alt?: boolean;
}

/** Where to go after a successful commit. */
export type CommitMove = 'down' | 'up' | 'right' | 'left' | 'stay';

/**
 * What the element should do besides moving focus.
 * - `begin-edit`: open the editor in the active cell; `initial` is the typed character that
 *   replaces the cell's text, absent to start from the cell's current text.
 * - `commit`: parse the editor text; only if it is accepted, close the editor and apply
 *   `active`/`mode` of the result (which already hold the cell after the move).
 * - `cancel`: close the editor without storing anything.
 * - `clear`: store an empty value in the active cell.
 * - `read-only`: the user tried to edit a calculated cell; say why nothing happens.
 * - `delete-row`: ask to delete the active row.
 * - `undo` / `redo` / `add-row-now`: the matching grid-level actions.
 */
export type GridCommand =
  | { readonly kind: 'none' }
  | { readonly kind: 'begin-edit'; readonly initial?: string }
  | { readonly kind: 'commit'; readonly move: CommitMove }
  | { readonly kind: 'cancel' }
  | { readonly kind: 'clear' }
  | { readonly kind: 'read-only' }
  | { readonly kind: 'delete-row' }
  | { readonly kind: 'undo' }
  | { readonly kind: 'redo' }
  | { readonly kind: 'add-row-now' };

export interface GridKeyState {
  readonly size: GridSize;
  /** The active cell; null when the grid has no rows. */
  readonly active: CellPos | null;
  readonly mode: GridMode;
  /** Whether the active cell accepts edits (false for calculated cells). */
  readonly activeEditable: boolean;
}

export interface GridKeyResult {
  /** True when the grid used the key: the element calls preventDefault(). */
  readonly handled: boolean;
  readonly active: CellPos | null;
  readonly mode: GridMode;
  readonly command: GridCommand;
}

const NONE: GridCommand = { kind: 'none' };

function unhandled(state: GridKeyState): GridKeyResult {
  return { handled: false, active: state.active, mode: state.mode, command: NONE };
}

function clamp(n: number, lo: number, hi: number): number {
  return Math.min(Math.max(n, lo), hi);
}

/** Keeps a position inside the grid (used after the grid shrinks, too). */
export function clampPos(pos: CellPos, size: GridSize): CellPos | null {
  if (size.rows <= 0 || size.cols <= 0) return null;
  return { row: clamp(pos.row, 0, size.rows - 1), col: clamp(pos.col, 0, size.cols - 1) };
}

/** Ctrl on most systems, Command on Apple keyboards. */
function primary(k: KeyInput): boolean {
  return Boolean(k.ctrl || k.meta);
}

/** A key that types one character (letters, digits, punctuation, space), with no command modifier. */
export function isPrintable(k: KeyInput): boolean {
  return [...k.key].length === 1 && !k.ctrl && !k.meta && !k.alt;
}

function isAltN(k: KeyInput): boolean {
  return Boolean(k.alt) && !primary(k) && (k.code === 'KeyN' || k.key.toLowerCase() === 'n');
}

function isUndo(k: KeyInput): boolean {
  return primary(k) && !k.alt && !k.shift && k.key.toLowerCase() === 'z';
}

function isRedo(k: KeyInput): boolean {
  if (!primary(k) || k.alt) return false;
  const key = k.key.toLowerCase();
  return (k.shift === true && key === 'z') || (!k.shift && key === 'y');
}

/** Target of a navigation key, or undefined when the key does not navigate. */
function navigationTarget(k: KeyInput, at: CellPos, size: GridSize): CellPos | undefined {
  const lastRow = size.rows - 1;
  const lastCol = size.cols - 1;
  const page = Math.max(1, size.pageRows);
  if (k.alt || k.shift) return undefined;
  if (primary(k)) {
    if (k.key === 'Home') return { row: 0, col: 0 };
    if (k.key === 'End') return { row: lastRow, col: lastCol };
    return undefined;
  }
  switch (k.key) {
    case 'ArrowRight':
      return { row: at.row, col: Math.min(at.col + 1, lastCol) };
    case 'ArrowLeft':
      return { row: at.row, col: Math.max(at.col - 1, 0) };
    case 'ArrowDown':
      return { row: Math.min(at.row + 1, lastRow), col: at.col };
    case 'ArrowUp':
      return { row: Math.max(at.row - 1, 0), col: at.col };
    case 'PageDown':
      return { row: Math.min(at.row + page, lastRow), col: at.col };
    case 'PageUp':
      return { row: Math.max(at.row - page, 0), col: at.col };
    case 'Home':
      return { row: at.row, col: 0 };
    case 'End':
      return { row: at.row, col: lastCol };
    default:
      return undefined;
  }
}

/** Keys that work in both modes or without any row. */
function globalCommand(state: GridKeyState, k: KeyInput): GridKeyResult | undefined {
  if (isAltN(k)) return { handled: true, active: state.active, mode: state.mode, command: { kind: 'add-row-now' } };
  // While editing, Ctrl+Z belongs to the text field's own undo.
  if (state.mode === 'navigate' && isUndo(k)) return { handled: true, active: state.active, mode: 'navigate', command: { kind: 'undo' } };
  if (state.mode === 'navigate' && isRedo(k)) return { handled: true, active: state.active, mode: 'navigate', command: { kind: 'redo' } };
  return undefined;
}

function navigateKey(state: GridKeyState, at: CellPos, k: KeyInput): GridKeyResult {
  const target = navigationTarget(k, at, state.size);
  if (target) return { handled: true, active: target, mode: 'navigate', command: NONE };

  const plain = !primary(k) && !k.alt && !k.shift;
  const wantsEdit = (plain && (k.key === 'Enter' || k.key === 'F2')) || isPrintable(k);
  if (wantsEdit) {
    if (!state.activeEditable) return { handled: true, active: at, mode: 'navigate', command: { kind: 'read-only' } };
    const command: GridCommand = isPrintable(k) ? { kind: 'begin-edit', initial: k.key } : { kind: 'begin-edit' };
    return { handled: true, active: at, mode: 'edit', command };
  }
  if (plain && (k.key === 'Delete' || k.key === 'Backspace')) {
    if (at.col === 0) return { handled: true, active: at, mode: 'navigate', command: { kind: 'delete-row' } };
    if (!state.activeEditable) return { handled: true, active: at, mode: 'navigate', command: { kind: 'read-only' } };
    return { handled: true, active: at, mode: 'navigate', command: { kind: 'clear' } };
  }
  return unhandled(state);
}

function commitTarget(move: CommitMove, at: CellPos, size: GridSize): CellPos {
  switch (move) {
    case 'down':
      return { row: Math.min(at.row + 1, size.rows - 1), col: at.col };
    case 'up':
      return { row: Math.max(at.row - 1, 0), col: at.col };
    case 'right':
      return { row: at.row, col: Math.min(at.col + 1, size.cols - 1) };
    case 'left':
      return { row: at.row, col: Math.max(at.col - 1, 0) };
    case 'stay':
      return at;
  }
}

function editKey(state: GridKeyState, at: CellPos, k: KeyInput): GridKeyResult {
  if (primary(k) || k.alt) return unhandled(state);
  let move: CommitMove | undefined;
  if (k.key === 'Enter') move = k.shift ? 'up' : 'down';
  else if (k.key === 'Tab') move = k.shift ? 'left' : 'right';
  else if (k.key === 'F2' && !k.shift) move = 'stay';
  if (move) {
    return { handled: true, active: commitTarget(move, at, state.size), mode: 'navigate', command: { kind: 'commit', move } };
  }
  if (k.key === 'Escape' && !k.shift) return { handled: true, active: at, mode: 'navigate', command: { kind: 'cancel' } };
  // Arrows, Home/End and characters belong to the text field while editing.
  return unhandled(state);
}

/**
 * Decides what one key press does in the grid.
 * @param state grid size, active cell, mode and whether the active cell is editable
 * @param key the key and its modifiers
 * @returns the new active cell and mode, the command for the element, and whether the key was used
 */
export function gridKey(state: GridKeyState, key: KeyInput): GridKeyResult {
  const global = globalCommand(state, key);
  if (global) return global;
  const at = state.active ? clampPos(state.active, state.size) : null;
  if (!at) return unhandled(state);
  return state.mode === 'edit' ? editKey(state, at, key) : navigateKey(state, at, key);
}
