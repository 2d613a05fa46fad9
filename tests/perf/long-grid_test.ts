// <tm-grid> on a 5,000-row worksheet in Chromium: only the rows near the viewport are rendered,
// and the grid keeps its keyboard model and screen-reader semantics while doing so.
// Expected behaviour comes from outside the project:
// - WAI-ARIA 1.2, aria-rowcount / aria-rowindex (https://www.w3.org/TR/wai-aria-1.2/#aria-rowcount):
//   when not all rows are present in the DOM, the grid states the total and each row its position.
// - WAI-ARIA Authoring Practices, data grid keyboard interaction and roving tabindex
//   (https://www.w3.org/WAI/ARIA/apg/patterns/grid/): Ctrl+Home / Ctrl+End to the first / last row,
//   Page Down / Page Up by a page, arrows by one, one tab stop.
// - axe-core (Deque's WCAG rule set) for the roles left in the DOM.
// Data: the fictional long worksheet of scripts/bench/long-worksheet.ts.
import { expect } from 'chai';
import { sendKeys } from '@web/test-runner-commands';
import '../../src/sheet/tm-grid.js';
import { deriveWorksheet } from '../../src/sheet/derived.js';
import type { Worksheet } from '../../src/sheet/model.js';
import { formatClock } from '../../src/sheet/time.js';
import type { TmGrid } from '../../src/sheet/tm-grid.js';
import { longWorksheet, longWorksheetNow } from '../../scripts/bench/long-worksheet.js';

const ROWS = 5000;
/**
 * The bound: rows in a 480 px viewport at 48 px (10), plus 10 rows of overscan on each side, plus
 * the active row when it is elsewhere, with room for rows shorter than 48 px (date lines make some
 * taller, none shorter). Far below 5,000.
 */
const MAX_RENDERED = 45;

let grid: TmGrid | undefined;
let edits: unknown[] = [];

afterEach(() => {
  grid?.remove();
  grid = undefined;
  edits = [];
});

async function settle(g: TmGrid): Promise<void> {
  for (let i = 0; i < 3; i++) {
    await g.updateComplete;
    await new Promise<void>((resolve) => requestAnimationFrame(() => resolve()));
  }
  await g.updateComplete;
}

async function setup(ws: Worksheet = longWorksheet({ rows: ROWS })): Promise<TmGrid> {
  const g = document.createElement('tm-grid');
  g.style.setProperty('--tm-grid-max-height', '480px');
  g.worksheet = ws;
  g.derived = deriveWorksheet(ws);
  g.now = longWorksheetNow(ws);
  g.addEventListener('tm-edit', (e) => edits.push(e.detail));
  document.body.append(g);
  grid = g;
  await settle(g);
  return g;
}

async function press(combo: string): Promise<void> {
  const parts = combo.split('+');
  const key = parts.pop()!;
  for (const m of parts) await sendKeys({ down: m });
  await sendKeys({ press: key });
  for (const m of parts.reverse()) await sendKeys({ up: m });
  if (grid) await settle(grid);
}

const root = (g: TmGrid) => g.shadowRoot!;
const scroller = (g: TmGrid) => root(g).querySelector<HTMLElement>('.scroller')!;
const renderedRows = (g: TmGrid) => [...root(g).querySelectorAll<HTMLElement>('tbody tr[role="row"]')];
const rowIndexOf = (el: Element | null | undefined) => Number(el?.closest('tr')?.getAttribute('aria-rowindex'));

function focusedCell(g: TmGrid): HTMLElement {
  const el = (root(g).activeElement as HTMLElement | null)?.closest<HTMLElement>('[data-col]');
  if (!el) throw new Error('no focused cell in the grid');
  return el;
}

/** "row:column" of a grid cell; throws when the cell does not carry both. */
function cellId(el: HTMLElement): string {
  const { row, col } = el.dataset;
  if (row === undefined || col === undefined) throw new Error('cell without data-row / data-col');
  return `${row}:${col}`;
}

function inView(g: TmGrid, el: Element): boolean {
  const box = scroller(g).getBoundingClientRect();
  const r = el.getBoundingClientRect();
  return r.bottom > box.top && r.top < box.bottom;
}

/** The row under the middle of the scroller's viewport (the rendered row there, never a spacer). */
function rowAtMiddle(g: TmGrid): HTMLElement | null {
  const box = scroller(g).getBoundingClientRect();
  const hit = root(g).elementFromPoint(box.left + 200, box.top + box.height / 2);
  return hit?.closest<HTMLElement>('tr') ?? null;
}

describe('tm-grid at 5,000 rows: bounded rendering', () => {
  it('renders a bounded window of rows, newest in view, and states the total for screen readers', async () => {
    const g = await setup();
    const table = root(g).querySelector('table')!;
    expect(table.getAttribute('aria-rowcount')).to.equal(String(ROWS + 1)); // header row + 5,000
    const rows = renderedRows(g);
    expect(rows.length).to.be.at.least(10).and.at.most(MAX_RENDERED);
    expect(rowIndexOf(rows[rows.length - 1])).to.equal(ROWS + 1); // the newest row, where the eye lands
    expect(inView(g, rows[rows.length - 1]!)).to.equal(true);
    // Every element of the table body is a real row or a spacer that screen readers skip.
    for (const tr of root(g).querySelectorAll('tbody tr:not([role="row"])')) {
      expect(tr.classList.contains('gap')).to.equal(true);
      expect(tr.getAttribute('aria-hidden')).to.equal('true');
    }
    expect(root(g).querySelectorAll('tbody td, tbody th').length).to.be.below(MAX_RENDERED * 25);
  });

  it('keeps the bound while scrolling, showing the rows at the scroll position with their true index and time', async () => {
    const g = await setup();
    const ws = g.worksheet!;
    const s = scroller(g);
    for (const fraction of [0, 0.5, 0.25, 0.9]) {
      s.scrollTop = (s.scrollHeight - s.clientHeight) * fraction;
      s.dispatchEvent(new Event('scroll'));
      await settle(g);
      expect(renderedRows(g).length, `rendered rows at ${fraction}`).to.be.at.most(MAX_RENDERED);
      const middle = rowAtMiddle(g);
      expect(middle?.getAttribute('role'), `a real row under the middle at ${fraction}`).to.equal('row');
      const index = rowIndexOf(middle);
      // The row shown there is the one at that share of the worksheet (within a screenful).
      expect(Math.abs(index - 2 - fraction * (ROWS - 1)), `row ${index} at ${fraction}`).to.be.below(30);
      const time = middle!.querySelector('[role="rowheader"] .v')!.textContent;
      expect(time).to.equal(formatClock(ws.rows[index - 2]!.time, ws.displayOffset));
    }
  });
});

describe('tm-grid at 5,000 rows: keyboard model (APG data grid)', () => {
  it('Ctrl+Home, Ctrl+End, Page Up/Down and arrows reach every row, one tab stop, the cell in view', async () => {
    const g = await setup();
    const start = root(g).querySelector<HTMLElement>('table [tabindex="0"]')!;
    start.focus();
    await settle(g);
    expect(rowIndexOf(focusedCell(g))).to.equal(ROWS + 1);

    await press('Control+Home');
    expect(rowIndexOf(focusedCell(g))).to.equal(2);
    expect(focusedCell(g).dataset['col']).to.equal('@time');
    expect(inView(g, focusedCell(g))).to.equal(true);
    expect(renderedRows(g).length).to.be.at.most(MAX_RENDERED);

    await press('ArrowRight');
    // Past the first window of rows, one row at a time.
    for (let i = 0; i < 40; i++) await sendKeys({ press: 'ArrowDown' });
    await settle(g);
    expect(rowIndexOf(focusedCell(g))).to.equal(42);
    expect(focusedCell(g).dataset['col']).to.equal('map');
    expect(inView(g, focusedCell(g))).to.equal(true);

    await press('PageDown');
    const afterPage = rowIndexOf(focusedCell(g));
    expect(afterPage)
      .to.be.above(42 + 2)
      .and.below(42 + 12); // a 480 px page of 48 px rows, less one
    expect(inView(g, focusedCell(g))).to.equal(true);
    await press('PageUp');
    expect(rowIndexOf(focusedCell(g))).to.equal(42);

    await press('Control+End');
    expect(rowIndexOf(focusedCell(g))).to.equal(ROWS + 1);
    expect(inView(g, focusedCell(g))).to.equal(true);
    expect(renderedRows(g).length).to.be.at.most(MAX_RENDERED);
    expect(root(g).querySelectorAll('table [tabindex="0"]').length).to.equal(1);
  });

  it('keeps the active cell as the tab stop after scrolling it far out of view', async () => {
    const g = await setup();
    root(g).querySelector<HTMLElement>('table [tabindex="0"]')!.focus();
    await press('ArrowRight');
    const active = focusedCell(g);
    const id = cellId(active);
    const s = scroller(g);
    s.scrollTop = 0;
    s.dispatchEvent(new Event('scroll'));
    await settle(g);
    expect(renderedRows(g).length).to.be.at.most(MAX_RENDERED);
    const stops = root(g).querySelectorAll<HTMLElement>('table [tabindex="0"]');
    expect(stops.length).to.equal(1);
    expect(cellId(stops[0]!)).to.equal(id);
    // Tab leaves the grid; Shift+Tab comes back to the same cell, brought into view.
    await press('Tab');
    await press('Shift+Tab');
    const back = focusedCell(g);
    expect(cellId(back)).to.equal(id);
    expect(inView(g, back)).to.equal(true);
  });

  it('edits a cell in the middle of the worksheet', async () => {
    const g = await setup();
    const ws = g.worksheet!;
    const s = scroller(g);
    s.scrollTop = (s.scrollHeight - s.clientHeight) / 2;
    s.dispatchEvent(new Event('scroll'));
    await settle(g);
    const middle = rowAtMiddle(g)!;
    const cell = middle.querySelector<HTMLElement>('[data-col="hr"]')!;
    cell.focus();
    await settle(g);
    await sendKeys({ type: '97' });
    await press('Enter');
    const row = ws.rows[rowIndexOf(middle) - 2]!;
    expect(edits).to.deep.equal([{ edits: [{ rowId: row.id, key: 'hr', cell: { value: 97 }, input: '97' }] }]);
    // Enter stores and moves down one row (APG: the grid, not the editor, decides the move).
    expect(rowIndexOf(focusedCell(g))).to.equal(rowIndexOf(middle) + 1);
  });
});

describe('tm-grid at 5,000 rows: accessibility scan (axe-core)', () => {
  it('finds no serious or critical violation in the virtualised grid, scrolled to the middle', async () => {
    const g = await setup();
    const s = scroller(g);
    s.scrollTop = s.scrollHeight / 2;
    s.dispatchEvent(new Event('scroll'));
    await settle(g);
    const axe = await loadAxe();
    const result = await axe.run(g, { resultTypes: ['violations'] });
    const serious = result.violations.filter((v) => v.impact === 'serious' || v.impact === 'critical').map((v) => `${v.id}: ${v.help}`);
    expect(serious).to.deep.equal([]);
  });
});

interface AxeLike {
  run(
    context: Element,
    options: { resultTypes: string[] },
  ): Promise<{ violations: { id: string; impact?: string | null; help: string }[] }>;
}

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
  return w.axe!;
}
