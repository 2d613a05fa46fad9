// The grid keyboard model against the WAI-ARIA Authoring Practices data-grid pattern
// (https://www.w3.org/WAI/ARIA/apg/patterns/grid/, "Keyboard Interaction", read from
// w3c/aria-practices content/patterns/grid/grid-pattern.html; paraphrased in
// /work/shared/style/anchors.md §7). Every key is checked at every cell of several grid shapes.
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import {
  clampPos,
  gridKey,
  isPrintable,
  type CellPos,
  type GridKeyState,
  type GridSize,
  type KeyInput,
} from '../../src/sheet/grid-keys.js';

const SIZES: GridSize[] = [
  { rows: 1, cols: 1, pageRows: 5 },
  { rows: 1, cols: 6, pageRows: 5 },
  { rows: 7, cols: 1, pageRows: 3 },
  { rows: 4, cols: 5, pageRows: 2 },
  { rows: 23, cols: 9, pageRows: 10 },
];

function* cells(size: GridSize): Generator<CellPos> {
  for (let row = 0; row < size.rows; row += 1) for (let col = 0; col < size.cols; col += 1) yield { row, col };
}

function nav(size: GridSize, active: CellPos, activeEditable = true): GridKeyState {
  return { size, active, mode: 'navigate', activeEditable };
}

function edit(size: GridSize, active: CellPos): GridKeyState {
  return { size, active, mode: 'edit', activeEditable: true };
}

const k = (key: string, mods: Omit<KeyInput, 'key'> = {}): KeyInput => ({ key, ...mods });

describe('grid keys: navigation mode (APG data grid)', () => {
  // APG: "Right Arrow: Moves focus one cell to the right. If focus is on the right-most cell in
  // the row, focus does not move." Left, Down, Up alike. A data grid does not wrap.
  const arrows: [string, (p: CellPos, s: GridSize) => CellPos][] = [
    ['ArrowRight', (p, s) => ({ row: p.row, col: Math.min(p.col + 1, s.cols - 1) })],
    ['ArrowLeft', (p) => ({ row: p.row, col: Math.max(p.col - 1, 0) })],
    ['ArrowDown', (p, s) => ({ row: Math.min(p.row + 1, s.rows - 1), col: p.col })],
    ['ArrowUp', (p) => ({ row: Math.max(p.row - 1, 0), col: p.col })],
    // APG: "Home: moves focus to the first cell in the row"; "End: ... last cell in the row".
    ['Home', (p) => ({ row: p.row, col: 0 })],
    ['End', (p, s) => ({ row: p.row, col: s.cols - 1 })],
    // APG: Page Down/Up move by an author-determined number of rows; no move in the last/first row.
    ['PageDown', (p, s) => ({ row: Math.min(p.row + s.pageRows, s.rows - 1), col: p.col })],
    ['PageUp', (p, s) => ({ row: Math.max(p.row - s.pageRows, 0), col: p.col })],
  ];
  for (const [key, expected] of arrows) {
    it(`${key} moves as the pattern says from every cell, never wrapping`, () => {
      for (const size of SIZES) {
        for (const at of cells(size)) {
          const r = gridKey(nav(size, at), k(key));
          expect(r, `${key} at ${at.row},${at.col} in ${size.rows}x${size.cols}`).toEqual({
            handled: true,
            active: expected(at, size),
            mode: 'navigate',
            command: { kind: 'none' },
          });
        }
      }
    });
  }

  it('Ctrl+Home goes to the first cell of the first row, Ctrl+End to the last cell of the last row', () => {
    // APG: "Control + Home: moves focus to the first cell in the first row"; "Control + End: ...
    // the last cell in the last row" (of the data, not of what is in the DOM).
    for (const size of SIZES) {
      for (const at of cells(size)) {
        for (const mod of [{ ctrl: true }, { meta: true }]) {
          expect(gridKey(nav(size, at), k('Home', mod)).active).toEqual({ row: 0, col: 0 });
          expect(gridKey(nav(size, at), k('End', mod)).active).toEqual({ row: size.rows - 1, col: size.cols - 1 });
        }
      }
    }
  });

  it('edge keys at an edge keep the key (handled) so the page does not scroll away', () => {
    const size = SIZES[3]!;
    const r = gridKey(nav(size, { row: 0, col: 0 }), k('ArrowUp'));
    expect(r.handled).toBe(true);
    expect(r.active).toEqual({ row: 0, col: 0 });
  });

  it('Enter and F2 start editing the active cell with its current text', () => {
    // APG: "Enter: ... places focus in the input"; "F2: ... places focus in the input".
    for (const size of SIZES) {
      for (const at of cells(size)) {
        for (const key of ['Enter', 'F2']) {
          expect(gridKey(nav(size, at), k(key))).toEqual({ handled: true, active: at, mode: 'edit', command: { kind: 'begin-edit' } });
        }
      }
    }
  });

  it('a printable character starts editing with that character', () => {
    // APG: "Alphanumeric keys: when the cell contains an editable field, typing starts editing".
    const size = SIZES[3]!;
    const at = { row: 2, col: 3 };
    for (const ch of ['7', 'a', 'Z', '.', '-', ' ', 'µ', '✓']) {
      expect(gridKey(nav(size, at), k(ch, { shift: ch === 'Z' }))).toEqual({
        handled: true,
        active: at,
        mode: 'edit',
        command: { kind: 'begin-edit', initial: ch },
      });
    }
  });

  it('Ctrl+letter, Alt+letter and named keys do not start editing', () => {
    const size = SIZES[3]!;
    const at = { row: 1, col: 1 };
    for (const input of [
      k('c', { ctrl: true }),
      k('v', { meta: true }),
      k('x', { alt: true }),
      k('Shift', { shift: true }),
      k('Control'),
      k('CapsLock'),
      k('F5'),
      k('Insert'),
    ]) {
      const r = gridKey(nav(size, at), input);
      expect(r.command.kind === 'begin-edit', JSON.stringify(input)).toBe(false);
      expect(r.mode).toBe('navigate');
    }
  });

  it('Tab and Escape in navigation mode are left to the browser (the grid is one Tab stop)', () => {
    // APG: the grid is a single tab stop; Tab moves out of it in navigation mode.
    const size = SIZES[3]!;
    for (const input of [k('Tab'), k('Tab', { shift: true }), k('Escape')]) {
      expect(gridKey(nav(size, { row: 1, col: 1 }), input)).toEqual({
        handled: false,
        active: { row: 1, col: 1 },
        mode: 'navigate',
        command: { kind: 'none' },
      });
    }
  });

  it('Delete and Backspace clear a measure cell and ask to delete the row on the row header', () => {
    const size = SIZES[3]!;
    for (const key of ['Delete', 'Backspace']) {
      expect(gridKey(nav(size, { row: 1, col: 2 }), k(key)).command).toEqual({ kind: 'clear' });
      expect(gridKey(nav(size, { row: 1, col: 0 }), k(key)).command).toEqual({ kind: 'delete-row' });
    }
  });

  it('calculated cells refuse editing and clearing with a reason, never opening an editor', () => {
    const size = SIZES[3]!;
    const at = { row: 1, col: 2 };
    for (const input of [k('Enter'), k('F2'), k('5'), k('Delete'), k('Backspace')]) {
      expect(gridKey(nav(size, at, false), input)).toEqual({ handled: true, active: at, mode: 'navigate', command: { kind: 'read-only' } });
    }
  });

  it('Ctrl+Z undoes; Ctrl+Shift+Z and Ctrl+Y redo (Command on Apple keyboards)', () => {
    // Common practice, no source: the platform undo/redo shortcuts.
    const s = nav(SIZES[3]!, { row: 1, col: 1 });
    expect(gridKey(s, k('z', { ctrl: true })).command).toEqual({ kind: 'undo' });
    expect(gridKey(s, k('z', { meta: true })).command).toEqual({ kind: 'undo' });
    expect(gridKey(s, k('Z', { ctrl: true, shift: true })).command).toEqual({ kind: 'redo' });
    expect(gridKey(s, k('y', { ctrl: true })).command).toEqual({ kind: 'redo' });
    expect(gridKey(s, k('Y', { ctrl: true, shift: true })).command).toEqual({ kind: 'none' });
  });

  it('Alt+N adds a row now, whatever the layout prints for the key, and even in an empty grid', () => {
    const empty: GridKeyState = { size: { rows: 0, cols: 5, pageRows: 5 }, active: null, mode: 'navigate', activeEditable: false };
    expect(gridKey(empty, k('n', { alt: true, code: 'KeyN' })).command).toEqual({ kind: 'add-row-now' });
    // macOS Option+N is a dead key: key "Dead", code "KeyN".
    expect(gridKey(empty, k('Dead', { alt: true, code: 'KeyN' })).command).toEqual({ kind: 'add-row-now' });
    expect(gridKey(nav(SIZES[3]!, { row: 0, col: 0 }), k('N', { alt: true, shift: true })).command).toEqual({ kind: 'add-row-now' });
    expect(gridKey(empty, k('n', { alt: true, ctrl: true })).command).toEqual({ kind: 'none' });
  });

  it('an empty grid ignores navigation and editing keys', () => {
    const empty: GridKeyState = { size: { rows: 0, cols: 5, pageRows: 5 }, active: null, mode: 'navigate', activeEditable: false };
    for (const key of ['ArrowDown', 'Enter', 'F2', 'a', 'Delete', 'Home', 'PageDown']) {
      expect(gridKey(empty, k(key))).toEqual({ handled: false, active: null, mode: 'navigate', command: { kind: 'none' } });
    }
  });
});

describe('grid keys: editing mode', () => {
  it('Enter commits and moves one row down; at the last row it stays', () => {
    for (const size of SIZES) {
      for (const at of cells(size)) {
        expect(gridKey(edit(size, at), k('Enter'))).toEqual({
          handled: true,
          active: { row: Math.min(at.row + 1, size.rows - 1), col: at.col },
          mode: 'navigate',
          command: { kind: 'commit', move: 'down' },
        });
      }
    }
  });

  it('Tab commits and moves right without wrapping; Shift+Tab moves left; Shift+Enter moves up', () => {
    // APG: Tab moves to the next widget while editing; wrapping is optional, and we do not wrap.
    for (const size of SIZES) {
      for (const at of cells(size)) {
        expect(gridKey(edit(size, at), k('Tab')).active).toEqual({ row: at.row, col: Math.min(at.col + 1, size.cols - 1) });
        expect(gridKey(edit(size, at), k('Tab')).command).toEqual({ kind: 'commit', move: 'right' });
        expect(gridKey(edit(size, at), k('Tab', { shift: true })).active).toEqual({ row: at.row, col: Math.max(at.col - 1, 0) });
        expect(gridKey(edit(size, at), k('Enter', { shift: true })).active).toEqual({ row: Math.max(at.row - 1, 0), col: at.col });
        expect(gridKey(edit(size, at), k('Tab')).handled).toBe(true);
      }
    }
  });

  it('Escape cancels and returns to navigation in the same cell; F2 commits and stays', () => {
    // APG: "Escape: restores grid navigation" (the edit may be undone); "F2: restores grid navigation".
    const size = SIZES[3]!;
    const at = { row: 2, col: 2 };
    expect(gridKey(edit(size, at), k('Escape'))).toEqual({ handled: true, active: at, mode: 'navigate', command: { kind: 'cancel' } });
    expect(gridKey(edit(size, at), k('F2'))).toEqual({
      handled: true,
      active: at,
      mode: 'navigate',
      command: { kind: 'commit', move: 'stay' },
    });
  });

  it('arrows, Home/End, characters, Delete and Ctrl+Z belong to the text field while editing', () => {
    // APG: while editing, arrow keys are captured by the widget in the cell.
    const size = SIZES[3]!;
    const at = { row: 2, col: 2 };
    for (const input of [
      k('ArrowLeft'),
      k('ArrowRight'),
      k('ArrowUp'),
      k('ArrowDown'),
      k('Home'),
      k('End'),
      k('PageDown'),
      k('a'),
      k('Delete'),
      k('Backspace'),
      k('z', { ctrl: true }),
      k('y', { ctrl: true }),
      k('Home', { ctrl: true }),
    ]) {
      expect(gridKey(edit(size, at), input), JSON.stringify(input)).toEqual({
        handled: false,
        active: at,
        mode: 'edit',
        command: { kind: 'none' },
      });
    }
  });
});

describe('grid keys: invariants over random input', () => {
  const sizeArb = fc.record({
    rows: fc.integer({ min: 1, max: 60 }),
    cols: fc.integer({ min: 1, max: 40 }),
    pageRows: fc.integer({ min: 1, max: 30 }),
  });
  const keyArb = fc.record({
    key: fc.oneof(
      fc.constantFrom(
        'ArrowUp',
        'ArrowDown',
        'ArrowLeft',
        'ArrowRight',
        'Home',
        'End',
        'PageUp',
        'PageDown',
        'Enter',
        'F2',
        'Escape',
        'Tab',
        'Delete',
        'Backspace',
        'z',
        'y',
        'n',
      ),
      fc.string({ minLength: 1, maxLength: 2 }),
    ),
    ctrl: fc.boolean(),
    meta: fc.boolean(),
    shift: fc.boolean(),
    alt: fc.boolean(),
  });

  it('the active cell always stays inside the grid', () => {
    fc.assert(
      fc.property(
        sizeArb,
        keyArb,
        fc.nat(),
        fc.nat(),
        fc.constantFrom<'navigate' | 'edit'>('navigate', 'edit'),
        fc.boolean(),
        (size, key, r, c, mode, editable) => {
          const active = { row: r % size.rows, col: c % size.cols };
          const out = gridKey({ size, active, mode, activeEditable: editable }, key);
          expect(out.active).not.toBeNull();
          expect(out.active!.row).toBeGreaterThanOrEqual(0);
          expect(out.active!.row).toBeLessThan(size.rows);
          expect(out.active!.col).toBeGreaterThanOrEqual(0);
          expect(out.active!.col).toBeLessThan(size.cols);
          // A calculated cell never opens an editor.
          if (!editable && mode === 'navigate') expect(out.mode).toBe('navigate');
          // An unused key changes nothing.
          if (!out.handled) expect(out).toEqual({ handled: false, active, mode, command: { kind: 'none' } });
        },
      ),
    );
  });

  it('clampPos pulls a stale position back inside a shrunken grid', () => {
    expect(clampPos({ row: 9, col: 9 }, { rows: 3, cols: 4, pageRows: 1 })).toEqual({ row: 2, col: 3 });
    expect(clampPos({ row: 1, col: 1 }, { rows: 0, cols: 4, pageRows: 1 })).toBeNull();
  });

  it('isPrintable accepts one character (including astral ones) and rejects named keys', () => {
    expect(isPrintable(k('😀'))).toBe(true);
    expect(isPrintable(k('Enter'))).toBe(false);
    expect(isPrintable(k('a', { ctrl: true }))).toBe(false);
  });
});
