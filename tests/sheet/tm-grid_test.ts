// <tm-grid> in Chromium with real key presses (sendKeys). The expected keyboard behaviour is the
// WAI-ARIA Authoring Practices data-grid pattern (https://www.w3.org/WAI/ARIA/apg/patterns/grid/,
// "Keyboard Interaction"; roving tabindex from the APG keyboard-interface practice). Accessibility
// is checked with axe-core (Deque's rule set for WCAG 2.x). Clinical figures come from
// /work/shared/reference/clinical-check-values.md. Data: the fictional fixture only.
import { sendKeys } from '@web/test-runner-commands';
import '../../src/sheet/tm-grid.js';
import { FixedClock } from '../../src/sheet/clock.js';
import { deriveWorksheet } from '../../src/sheet/derived.js';
import type { Worksheet } from '../../src/sheet/model.js';
import type { TmGrid } from '../../src/sheet/tm-grid.js';
import { addRow, deleteRow, setCells, setColumns, setRowTime, type Ctx } from '../../src/sheet/worksheet.js';
import { FIXTURE_NOW, gridFixture } from './grid-fixture.js';

// --- Small assertion helpers (no assertion library is a declared dependency) ------------------
function fail(message: string): never {
  throw new Error(message);
}
function eq(actual: unknown, expected: unknown, what: string): void {
  const a = JSON.stringify(actual);
  const e = JSON.stringify(expected);
  if (a !== e) fail(`${what}: expected ${e}, got ${a}`);
}
function ok(value: unknown, what: string): void {
  if (!value) fail(`${what}: expected a truthy value, got ${String(value)}`);
}
function must<T>(value: T | null | undefined, what: string): T {
  if (value === null || value === undefined) fail(`${what}: not found`);
  return value;
}

// --- Harness -----------------------------------------------------------------------------------
const EVENT_NAMES = ['tm-edit', 'tm-paste', 'tm-add-row', 'tm-row-time', 'tm-delete-row', 'tm-undo', 'tm-redo', 'tm-columns'] as const;
type Seen = { name: string; detail: unknown };

interface Harness {
  grid: TmGrid;
  events: Seen[];
  ws(): Worksheet;
  of(name: string): unknown[];
}

let current: Harness | undefined;

/** Renders the fixture and applies the grid's events with the pure commands, as the app would. */
async function setup(worksheet: Worksheet = gridFixture(), opts: { maxHeight?: string } = {}): Promise<Harness> {
  const ctx: Ctx = { clock: new FixedClock(FIXTURE_NOW) };
  let ws = worksheet;
  const grid = document.createElement('tm-grid');
  if (opts.maxHeight) grid.style.setProperty('--tm-grid-max-height', opts.maxHeight);
  const events: Seen[] = [];
  const show = (next: Worksheet) => {
    ws = next;
    grid.worksheet = ws;
    grid.derived = deriveWorksheet(ws);
  };
  for (const name of EVENT_NAMES) grid.addEventListener(name, (e) => events.push({ name, detail: (e as CustomEvent).detail }));
  grid.addEventListener('tm-edit', (e) => show(setCells(ctx, ws, e.detail.edits).worksheet));
  grid.addEventListener('tm-add-row', (e) => show(addRow(ctx, ws, e.detail.time, e.detail.offset).worksheet));
  grid.addEventListener('tm-row-time', (e) => show(setRowTime(ctx, ws, e.detail.rowId, e.detail.time, e.detail.offset).worksheet));
  grid.addEventListener('tm-delete-row', (e) => show(deleteRow(ctx, ws, e.detail.rowId).worksheet));
  grid.addEventListener('tm-columns', (e) => show(setColumns(ctx, ws, e.detail.columns).worksheet));
  grid.now = FIXTURE_NOW;
  show(ws);
  document.body.append(grid);
  await settle(grid);
  current = { grid, events, ws: () => ws, of: (name) => events.filter((e) => e.name === name).map((e) => e.detail) };
  return current;
}

afterEach(() => {
  current?.grid.remove();
  current = undefined;
});

async function settle(grid: TmGrid): Promise<void> {
  await grid.updateComplete;
  await new Promise<void>((resolve) => requestAnimationFrame(() => resolve()));
  await grid.updateComplete;
}

/** Presses a key or a combination such as "Control+Home" (the Chrome launcher needs down/up for modifiers). */
async function press(combo: string): Promise<void> {
  const parts = combo.split('+');
  const key = parts.pop()!;
  for (const m of parts) await sendKeys({ down: m });
  await sendKeys({ press: key });
  for (const m of parts.reverse()) await sendKeys({ up: m });
  if (current) await settle(current.grid);
}

async function type(text: string): Promise<void> {
  await sendKeys({ type: text });
  if (current) await settle(current.grid);
}

const root = (grid: TmGrid) => must(grid.shadowRoot, 'shadow root');
const $ = <T extends Element = HTMLElement>(grid: TmGrid, sel: string) => must(root(grid).querySelector<T>(sel), sel);

/** The focused element inside the grid's shadow root. */
function focused(grid: TmGrid): HTMLElement {
  return must(root(grid).activeElement as HTMLElement | null, 'focused element in the grid');
}

/** Row index (time order) and column key of the cell with focus. */
function focusedCell(h: Harness): { row: number; col: string } {
  const el = focused(h.grid).closest<HTMLElement>('[data-col]');
  const cell = must(el, 'focused cell');
  return { row: h.ws().rows.findIndex((r) => r.id === cell.dataset['row']), col: must(cell.dataset['col'], 'data-col') };
}

function cell(h: Harness, row: number, col: string): HTMLElement {
  const id = must(h.ws().rows[row], `row ${row}`).id;
  return $(h.grid, `[data-row="${id}"][data-col="${col}"]`);
}

async function focusCell(h: Harness, row: number, col: string): Promise<void> {
  cell(h, row, col).focus();
  await settle(h.grid);
}

function assertSingleTabStop(h: Harness): void {
  const stops = root(h.grid).querySelectorAll('table [tabindex="0"]');
  eq(stops.length, 1, 'cells with tabindex 0 (roving tabindex)');
  eq(stops[0], focused(h.grid).closest('[data-col]'), 'the tab stop is the focused cell');
}

function text(el: Element | null | undefined): string {
  return (el?.textContent ?? '').replace(/\s+/g, ' ').trim();
}

// --- Tests -------------------------------------------------------------------------------------
describe('tm-grid: roles and names', () => {
  it('is a grid named by the worksheet with counts, named column headers and time row headers', async () => {
    const h = await setup();
    const table = $(h.grid, 'table');
    eq(table.getAttribute('role'), 'grid', 'role');
    eq(table.getAttribute('aria-label'), 'Worksheet Bed 7 (fictional)', 'aria-label');
    const cols = h.ws().columns.length; // every fixture column is known
    eq(table.getAttribute('aria-rowcount'), String(h.ws().rows.length + 1), 'aria-rowcount');
    eq(table.getAttribute('aria-colcount'), String(cols + 1), 'aria-colcount');
    const headers = [...root(h.grid).querySelectorAll('[role="columnheader"]')].map(text);
    eq(headers.slice(0, 4), ['Time UTC+01:00', 'MAP mmHg', 'SBP mmHg', 'DBP mmHg'], 'first headers: label and unit');
    // No spreadsheet column letters or cell addresses anywhere (project rule).
    ok(
      headers.every((t) => !/^[A-Z]{1,2}$/.test(t)),
      'no column letters',
    );
    // Row headers: the time in the worksheet's offset (+01:00); 07:40Z is 08:40 there.
    const rowHeaders = [...root(h.grid).querySelectorAll('[role="rowheader"]')];
    eq(text(rowHeaders[0]?.querySelector('.v')), '08:40', 'first row time');
    eq(rowHeaders[0]?.getAttribute('title'), '2026-03-01 08:40 (UTC+01:00)', 'full date in the title');
    const rows = [...root(h.grid).querySelectorAll('tbody [role="row"]')];
    eq(
      rows.map((r) => r.getAttribute('aria-rowindex')),
      ['2', '3', '4', '5'],
      'aria-rowindex',
    );
    eq(cell(h, 0, 'sbp').getAttribute('aria-colindex'), '3', 'aria-colindex of SBP');
  });

  it('marks calculated cells read-only and explains their formula and source', async () => {
    const h = await setup();
    const si = cell(h, 0, 'shock_index');
    eq(si.getAttribute('aria-readonly'), 'true', 'aria-readonly on a calculated cell');
    // Shock index = HR / SBP = 124 / 82 = 1.51 (common practice, no source).
    eq(text(si), '1.51', 'shock index value');
    const desc = $(h.grid, `#${si.getAttribute('aria-describedby') ?? ''}`);
    ok(/HR \/ SBP/.test(text(desc)), 'description names the formula');
    ok(/calc/.test(text($(h.grid, '[role="columnheader"][aria-colindex="6"]'))), 'header says calc');
    eq(cell(h, 0, 'map').getAttribute('aria-readonly'), null, 'measured cells are not read-only');
    // MAP estimated from 82/44 when not charted: 44 + (82 − 44)/3 = 56.7 → 57 (reference file §12).
    eq(text(cell(h, 0, 'map')), '57 est.', 'estimated MAP, marked');
  });

  it('shows save state and highlighted rows with a word and a symbol, not colour alone', async () => {
    const h = await setup();
    const [, second, , last] = h.ws().rows;
    h.grid.highlightRows = new Set([second!.id]);
    h.grid.pending = new Map([
      [`${last!.id}:lactate`, 'saving'],
      [`${last!.id}:hr`, 'failed'],
    ]);
    await settle(h.grid);
    ok(text(cell(h, 3, 'lactate')).includes('◌ saving'), 'saving word and symbol');
    ok(text(cell(h, 3, 'hr')).includes('✕ not saved'), 'failed word and symbol');
    const rh = cell(h, 1, '@time');
    ok(text(rh).includes('◆') && text(rh).includes('(highlighted)'), 'highlight marker and word');
    // MAP 58 is below the 65 mmHg target (SSC 2021; reference file §1): flagged in words.
    ok(text(cell(h, 1, 'map')).includes('↓ low'), 'alarming value flagged with symbol and word');
  });
});

describe('tm-grid: keyboard navigation (APG data grid)', () => {
  it('starts on the newest row, first measure, as the only tab stop', async () => {
    const h = await setup();
    const stop = $(h.grid, 'table [tabindex="0"]');
    eq(stop.dataset['col'], 'map', 'first measure');
    eq(stop.dataset['row'], h.ws().rows[3]!.id, 'newest row');
  });

  it('moves with arrows, Home/End and Ctrl+Home/End, never wrapping', async () => {
    const h = await setup();
    await focusCell(h, 3, 'map');
    await press('ArrowUp');
    eq(focusedCell(h), { row: 2, col: 'map' }, 'ArrowUp');
    await press('ArrowRight');
    eq(focusedCell(h), { row: 2, col: 'sbp' }, 'ArrowRight');
    await press('ArrowLeft');
    await press('ArrowLeft');
    eq(focusedCell(h), { row: 2, col: '@time' }, 'ArrowLeft to the row header');
    await press('ArrowLeft');
    eq(focusedCell(h), { row: 2, col: '@time' }, 'no move past the first column');
    await press('End');
    const last = h.ws().columns[h.ws().columns.length - 1]!;
    eq(focusedCell(h), { row: 2, col: last }, 'End');
    await press('ArrowRight');
    eq(focusedCell(h), { row: 2, col: last }, 'no wrap at the row end');
    await press('Home');
    eq(focusedCell(h), { row: 2, col: '@time' }, 'Home');
    await press('Control+End');
    eq(focusedCell(h), { row: 3, col: last }, 'Ctrl+End: last cell of the last row');
    await press('ArrowDown');
    eq(focusedCell(h), { row: 3, col: last }, 'no move past the last row');
    await press('Control+Home');
    eq(focusedCell(h), { row: 0, col: '@time' }, 'Ctrl+Home: first cell of the first row');
    assertSingleTabStop(h);
  });

  it('pages by a visible page with Page Down / Page Up and keeps the cell in view', async () => {
    let ws = gridFixture();
    const ctx: Ctx = { clock: new FixedClock(FIXTURE_NOW) };
    for (let i = 0; i < 26; i += 1)
      ws = addRow(ctx, ws, new Date(Date.parse('2026-03-01T10:00:00Z') + i * 300_000).toISOString(), 60, {
        hr: { value: 90 + i },
      }).worksheet;
    const h = await setup(ws, { maxHeight: '320px' });
    await focusCell(h, 0, 'hr');
    await press('PageDown');
    const down = focusedCell(h);
    ok(down.row >= 2 && down.row < 29, `PageDown moved a page (to row ${down.row})`);
    eq(down.col, 'hr', 'same column');
    const scroller = $(h.grid, '.scroller').getBoundingClientRect();
    const now = focused(h.grid).getBoundingClientRect();
    ok(now.top >= scroller.top && now.bottom <= scroller.bottom + 1, 'the new cell is scrolled into view');
    await press('PageUp');
    eq(focusedCell(h), { row: 0, col: 'hr' }, 'PageUp returns');
    await press('PageUp');
    eq(focusedCell(h), { row: 0, col: 'hr' }, 'no move above the first row');
  });

  it('is one Tab stop: Tab leaves the grid, Shift+Tab comes back to the same cell', async () => {
    const h = await setup();
    await focusCell(h, 1, 'hr');
    await press('Tab');
    eq(focused(h.grid).textContent?.trim(), 'Add row now', 'Tab leaves to the next control');
    await press('Shift+Tab');
    eq(focusedCell(h), { row: 1, col: 'hr' }, 'back on the last active cell');
  });
});

describe('tm-grid: editing', () => {
  it('Enter edits; Escape cancels without emitting', async () => {
    const h = await setup();
    await focusCell(h, 3, 'map');
    await press('Enter');
    const input = focused(h.grid) as HTMLInputElement;
    eq(input.tagName, 'INPUT', 'the editor has focus');
    eq(input.value, '68', 'editor starts with the stored value');
    await type('0');
    await press('Escape');
    eq(h.events.length, 0, 'nothing emitted');
    eq(focusedCell(h), { row: 3, col: 'map' }, 'back on the cell');
    eq(text(cell(h, 3, 'map')), '68', 'value unchanged');
  });

  it('typing starts editing with that character; Enter stores and moves down', async () => {
    const h = await setup();
    await focusCell(h, 2, 'map');
    await type('70');
    eq((focused(h.grid) as HTMLInputElement).value, '70', 'typed characters replace the value');
    await press('Enter');
    const rowId = h.ws().rows[2]!.id;
    eq(h.of('tm-edit'), [{ edits: [{ rowId, key: 'map', cell: { value: 70 }, input: '70' }] }], 'tm-edit detail');
    eq(focusedCell(h), { row: 3, col: 'map' }, 'moved down one row');
    eq(text(cell(h, 2, 'map')), '70', 'new value shown once the owner applied it');
  });

  it('Tab stores and moves right; F2 stores and stays', async () => {
    const h = await setup();
    await focusCell(h, 3, 'sbp');
    await type('104');
    await press('Tab');
    eq(focusedCell(h), { row: 3, col: 'dbp' }, 'Tab moved right');
    await press('F2');
    await type('6');
    eq((focused(h.grid) as HTMLInputElement).value, '6', 'F2 on an empty cell opens an empty editor');
    await press('Backspace');
    await type('58');
    await press('F2');
    eq(focusedCell(h), { row: 3, col: 'dbp' }, 'F2 stays');
    eq(
      h.of('tm-edit').map((d) => (d as { edits: { key: string; cell: unknown }[] }).edits[0]),
      [
        { rowId: h.ws().rows[3]!.id, key: 'sbp', cell: { value: 104 }, input: '104' },
        { rowId: h.ws().rows[3]!.id, key: 'dbp', cell: { value: 58 }, input: '58' },
      ],
      'two edits',
    );
  });

  it('refuses an invalid entry at the cell, keeps the editor open and emits nothing', async () => {
    const h = await setup();
    await focusCell(h, 3, 'map');
    await type('999');
    await press('Enter');
    eq(h.events.length, 0, 'nothing emitted');
    const input = focused(h.grid) as HTMLInputElement;
    eq(input.tagName, 'INPUT', 'editor still open and focused');
    eq(input.getAttribute('aria-invalid'), 'true', 'aria-invalid');
    const message = $(h.grid, `#${input.getAttribute('aria-describedby') ?? ''}`);
    eq(message.getAttribute('role'), 'alert', 'message is an alert');
    // MAP accepted range in the catalog: 15–250 mmHg.
    ok(/outside the accepted range.*15–250 mmHg/.test(text(message)), `message says the range: ${text(message)}`);
    ok(input.closest('td')!.contains(message), 'message is at the cell');
    const box = message.getBoundingClientRect();
    ok(box.height > 0 && box.bottom <= $(h.grid, '.scroller').getBoundingClientRect().bottom + 1, 'message visible, not cut off');
    // Fix it: the same editor, a valid value.
    await press('Backspace');
    await press('Backspace');
    await press('Backspace');
    await type('72');
    await press('Enter');
    eq(h.of('tm-edit').length, 1, 'stored after the fix');
  });

  it('keeps an alarming value, emits it with its flag and shows the warning briefly at the cell', async () => {
    const h = await setup();
    await focusCell(h, 3, 'map');
    await type('55');
    await press('Enter');
    // 55 < 65 mmHg, the MAP target (SSC 2021, reference file §1): kept and flagged.
    eq((h.of('tm-edit')[0] as { edits: { cell: unknown }[] }).edits[0]!.cell, { value: 55, flag: 'low' }, 'flagged cell');
    const note = $(h.grid, '.bubble.warn');
    ok(/below 65/.test(text(note)) && text(note).startsWith('⚠'), 'warning with a symbol at the cell');
    ok(/below 65/.test(text($(h.grid, '[role="status"]'))), 'warning announced in the status line');
  });

  it('Delete clears a cell as an ordinary edit; calculated cells refuse editing', async () => {
    const h = await setup();
    await focusCell(h, 0, 'temp');
    await press('Delete');
    eq(h.of('tm-edit'), [{ edits: [{ rowId: h.ws().rows[0]!.id, key: 'temp', cell: null, input: '' }] }], 'clear emitted');
    await focusCell(h, 0, 'shock_index');
    await press('Enter');
    await type('3');
    eq(root(h.grid).querySelector('input.editor'), null, 'no editor on a calculated cell');
    ok(/calculated/.test(text($(h.grid, '[role="status"]'))), 'says why');
    eq(h.of('tm-edit').length, 1, 'nothing more emitted');
  });

  it('edits a row time from its row header', async () => {
    const h = await setup();
    const rowId = h.ws().rows[3]!.id;
    await focusCell(h, 3, '@time');
    await press('Enter');
    eq((focused(h.grid) as HTMLInputElement).value, '10:15', 'editor shows the clock time');
    for (let i = 0; i < 5; i += 1) await press('Backspace');
    await type('10:05');
    await press('Enter');
    // 10:05 at +01:00 is 09:05 UTC.
    eq(h.of('tm-row-time'), [{ rowId, time: '2026-03-01T09:05:00.000Z', offset: 60 }], 'tm-row-time detail');
  });
});

describe('tm-grid: rows, undo, columns', () => {
  it('an empty worksheet says what to do, and Alt+N adds its first row', async () => {
    const ws = gridFixture();
    const h = await setup({ ...ws, rows: [] });
    ok(/No rows yet/.test(text($(h.grid, '.empty'))), 'explains itself');
    eq($(h.grid, 'table').getAttribute('aria-rowcount'), '1', 'only the header row');
    $(h.grid, 'button.add-now').focus();
    await press('Alt+n');
    eq(h.of('tm-add-row'), [{ time: '2026-03-01T09:30:00.000Z', offset: 60 }], 'first row now');
    await settle(h.grid);
    eq(focusedCell(h), { row: 0, col: 'map' }, 'the new row is active');
  });

  it('Ctrl+Z asks to undo, Ctrl+Shift+Z and Ctrl+Y to redo', async () => {
    const h = await setup();
    await focusCell(h, 1, 'hr');
    await press('Control+z');
    await press('Control+Shift+Z');
    await press('Control+y');
    eq(
      h.events.map((e) => e.name),
      ['tm-undo', 'tm-redo', 'tm-redo'],
      'events',
    );
  });

  it('Alt+N adds a row now (from the injected clock) and moves to it', async () => {
    const h = await setup();
    await focusCell(h, 1, 'hr');
    await press('Alt+n');
    // FIXTURE_NOW is 09:30 UTC; the worksheet shows +01:00.
    eq(h.of('tm-add-row'), [{ time: '2026-03-01T09:30:00.000Z', offset: 60 }], 'tm-add-row detail');
    await settle(h.grid);
    eq(focusedCell(h), { row: 4, col: 'map' }, 'the new row is active');
  });

  it('adds a row at a typed time and refuses a time it cannot read', async () => {
    const h = await setup();
    const input = $<HTMLInputElement>(h.grid, '#add-time');
    input.focus();
    await type('25:99');
    await press('Enter');
    eq(h.of('tm-add-row').length, 0, 'nothing emitted');
    ok(/not a clock time/.test(text($(h.grid, '#add-time-error'))), 'error shown next to the field');
    eq(input.getAttribute('aria-describedby'), 'add-time-error', 'error tied to the field');
    input.value = '';
    await type('10:20');
    await press('Enter');
    eq(h.of('tm-add-row'), [{ time: '2026-03-01T09:20:00.000Z', offset: 60 }], 'row at 10:20 (+01:00)');
  });

  it('asks before deleting a row, inside the element', async () => {
    const h = await setup();
    const rowId = h.ws().rows[2]!.id;
    await focusCell(h, 2, '@time');
    await press('Delete');
    const dialog = $<HTMLDialogElement>(h.grid, 'dialog.delete');
    ok(dialog.open, 'confirmation open');
    eq(dialog.getAttribute('role'), 'alertdialog', 'alertdialog');
    eq(focused(h.grid).textContent?.trim(), 'Keep the row', 'the safe choice has focus');
    await press('Escape');
    ok(!dialog.open, 'Escape closes');
    eq(h.of('tm-delete-row').length, 0, 'nothing deleted');
    await press('Delete');
    $<HTMLButtonElement>(h.grid, 'dialog.delete button.confirm').click();
    await settle(h.grid);
    eq(h.of('tm-delete-row'), [{ rowId }], 'tm-delete-row after confirming');
  });

  it('moves a column with the keyboard-operable chooser', async () => {
    const h = await setup();
    const toggle = $<HTMLButtonElement>(h.grid, 'button.columns');
    toggle.click();
    await settle(h.grid);
    eq(toggle.getAttribute('aria-expanded'), 'true', 'expanded');
    const chooser = must($(h.grid, 'tm-column-chooser').shadowRoot, 'chooser root');
    const right = must(chooser.querySelector<HTMLButtonElement>('[aria-label="Move MAP right"]'), 'move MAP right');
    right.focus();
    await press('Enter');
    const columns = (h.of('tm-columns')[0] as { columns: string[] }).columns;
    eq(columns.slice(0, 3), ['sbp', 'map', 'dbp'], 'MAP moved right');
    eq(text($(h.grid, '[role="columnheader"][aria-colindex="2"]')), 'SBP mmHg', 'grid shows the new order');
  });
});

describe('tm-grid: paste', () => {
  function paste(h: Harness, data: string): void {
    const dt = new DataTransfer();
    dt.setData('text/plain', data);
    focused(h.grid).dispatchEvent(new ClipboardEvent('paste', { clipboardData: dt, bubbles: true, composed: true, cancelable: true }));
  }

  it('shows a preview with refusals and emits only the accepted values after Confirm', async () => {
    const h = await setup();
    await focusCell(h, 2, 'map');
    // Positional block from MAP: row 09:40 gets MAP 66 and SBP 999 (refused: range 20–300 mmHg);
    // row 10:15 gets MAP "abc" (refused) and SBP 110.
    paste(h, '66\t999\nabc\t110\n');
    await settle(h.grid);
    const dialog = $<HTMLDialogElement>(h.grid, 'dialog.paste');
    ok(dialog.open, 'preview open');
    eq(h.events.length, 0, 'nothing emitted before confirming');
    ok(
      /2 values to store/.test(text($(h.grid, '#paste-counts'))) && /2 refused/.test(text($(h.grid, '#paste-counts'))),
      `counts: ${text($(h.grid, '#paste-counts'))}`,
    );
    ok(/outside the accepted range/.test(text(dialog)) && /not a number/.test(text(dialog)), 'reasons listed');
    $<HTMLButtonElement>(h.grid, 'dialog.paste button.confirm').click();
    await settle(h.grid);
    const [r2, r3] = [h.ws().rows[2]!.id, h.ws().rows[3]!.id];
    eq(
      h.of('tm-paste'),
      [
        {
          newRows: [],
          edits: [
            { rowId: r2, key: 'map', cell: { value: 66 }, input: '66' },
            { rowId: r3, key: 'sbp', cell: { value: 110 }, input: '110' },
          ],
        },
      ],
      'only accepted values, one event',
    );
    ok(!dialog.open, 'preview closed');
  });

  it('creates rows from a block with a time column; Cancel emits nothing', async () => {
    const h = await setup();
    await focusCell(h, 3, 'map');
    paste(h, 'time\tmap\n10:45\t71\n');
    await settle(h.grid);
    $<HTMLButtonElement>(h.grid, 'dialog.paste button.cancel').click();
    await settle(h.grid);
    eq(h.events.length, 0, 'cancel emits nothing');
    paste(h, 'time\tmap\n10:45\t71\n');
    await settle(h.grid);
    $<HTMLButtonElement>(h.grid, 'dialog.paste button.confirm').click();
    eq(
      h.of('tm-paste'),
      [{ newRows: [{ time: '2026-03-01T09:45:00.000Z', offset: 60, cells: { map: { value: 71 } } }], edits: [] }],
      'new row',
    );
  });

  it('a single pasted value opens the editor with it, read like typing', async () => {
    const h = await setup();
    await focusCell(h, 3, 'lactate');
    paste(h, '2,4\n');
    await settle(h.grid);
    const input = focused(h.grid) as HTMLInputElement;
    eq(input.value, '2,4', 'editor opened with the pasted value');
    await press('Enter');
    eq((h.of('tm-edit')[0] as { edits: { cell: unknown }[] }).edits[0]!.cell, { value: 2.4 }, 'decimal comma read as 2.4');
  });
});

describe('tm-grid: accessibility scan (axe-core)', () => {
  async function loadAxe(): Promise<AxeLike> {
    const w = window as unknown as { axe?: AxeLike };
    if (!w.axe) {
      await new Promise<void>((resolve, reject) => {
        const s = document.createElement('script');
        s.src = '/node_modules/axe-core/axe.min.js';
        s.onload = () => resolve();
        s.onerror = () => reject(new Error('could not load axe-core'));
        document.head.append(s);
      });
    }
    return must(w.axe, 'window.axe');
  }

  async function seriousViolations(target: Element): Promise<string[]> {
    const axe = await loadAxe();
    const result = await axe.run(target, { resultTypes: ['violations'] });
    return result.violations
      .filter((v) => v.impact === 'serious' || v.impact === 'critical')
      .map((v) => `${v.id} (${String(v.impact)}): ${v.help} — ${v.nodes.map((n) => JSON.stringify(n.target)).join(', ')}`);
  }

  it('reaches into the shadow root: a planted unlabeled field inside the grid is reported', async () => {
    // Control for the scans below, so they cannot pass by not looking. axe rule "label"
    // (WCAG 4.1.2, impact critical) flags a text field with no accessible name.
    const h = await setup();
    const planted = document.createElement('input');
    planted.type = 'text';
    $(h.grid, '.bar').append(planted);
    const found = await seriousViolations(h.grid);
    ok(
      found.some((f) => f.startsWith('label ')),
      `the planted field is reported: ${JSON.stringify(found)}`,
    );
  });

  it('finds no serious or critical violation in the grid, with statuses, an open editor error and the chooser', async () => {
    const h = await setup();
    const [, second, , last] = h.ws().rows;
    h.grid.highlightRows = new Set([second!.id]);
    h.grid.pending = new Map([
      [`${last!.id}:lactate`, 'saving'],
      [`${last!.id}:hr`, 'failed'],
    ]);
    $<HTMLButtonElement>(h.grid, 'button.columns').click();
    await settle(h.grid);
    await focusCell(h, 3, 'map');
    await type('999');
    await press('Enter');
    const found = await seriousViolations(h.grid);
    eq(found, [], 'serious/critical axe violations');
  });

  it('finds no serious or critical violation in the paste preview', async () => {
    const h = await setup();
    await focusCell(h, 2, 'map');
    const dt = new DataTransfer();
    dt.setData('text/plain', '66\t999\nabc\t110\n');
    focused(h.grid).dispatchEvent(new ClipboardEvent('paste', { clipboardData: dt, bubbles: true, composed: true }));
    await settle(h.grid);
    const found = await seriousViolations(h.grid);
    eq(found, [], 'serious/critical axe violations');
  });
});

interface AxeLike {
  run(
    context: Element,
    options: { resultTypes: string[] },
  ): Promise<{ violations: { id: string; impact?: string | null; help: string; nodes: { target: unknown }[] }[] }>;
}
