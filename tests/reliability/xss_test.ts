// Hostile text in every text field renders as inert text: <tm-app> in Chromium with real
// IndexedDB, on a page WITHOUT the production Content-Security-Policy, so markup that reached
// the DOM as HTML would really run (the production policy is tested separately, in
// network.test.ts). Fields: worksheet labels, time-zero reasons, notes, drug names, mark texts,
// own-goal names, calculated-column names, every panel that shows them (header, notebook list,
// grid, goal panel, facts, exports with the note preview, column and goal editors, trends), and
// files imported through the real file input, valid and invalid.
// The payloads are classic vectors from the OWASP XSS Filter Evasion Cheat Sheet and the
// PortSwigger XSS cheat sheet (common practice, no single source); Lit renders text bindings as
// Text nodes and attribute bindings through setAttribute (lit.dev "Expressions";
// reference/reliability-security-performance.md §5).
import { expect } from 'chai';
import '../../src/app/zod-setup.js';
import '../../src/app/tm-app.js';
import type { TmApp } from '../../src/app/tm-app.js';
import { FixedClock } from '../../src/sheet/clock.js';
import type { Worksheet } from '../../src/sheet/model.js';
import { addRow, createWorksheet, setCustomGoals, setDerivedColumns, setFacts } from '../../src/sheet/worksheet.js';
import { backupToJson, createBackup } from '../../src/storage/backup.js';
import { openStore, type Store } from '../../src/storage/store.js';
import { PAYLOADS } from './payloads.js';

const hits: number[] = [];
(window as unknown as { __xss: (n: number) => void }).__xss = (n) => hits.push(n);

const T0 = Date.parse('2026-03-01T08:00:00Z');
let stores: Store[] = [];
let apps: TmApp[] = [];

afterEach(() => {
  for (const a of apps) a.remove();
  for (const s of stores) s.close();
  apps = [];
  stores = [];
});

/** Every element under root, through shadow roots. */
function deepElements(root: Element | ShadowRoot): Element[] {
  const out: Element[] = [];
  const walk = (node: Element | ShadowRoot): void => {
    for (const el of node.querySelectorAll('*')) {
      out.push(el);
      if (el.shadowRoot) walk(el.shadowRoot);
    }
  };
  walk(root);
  if (root instanceof Element && root.shadowRoot) walk(root.shadowRoot);
  return out;
}

/** All text under root, through shadow roots, plus form field values and attribute text. */
function deepText(root: Element): string {
  const parts: string[] = [];
  const walk = (node: Node): void => {
    if (node.nodeType === Node.TEXT_NODE) parts.push(node.nodeValue ?? '');
    if (node instanceof HTMLInputElement || node instanceof HTMLTextAreaElement) parts.push(node.value);
    if (node instanceof Element) {
      for (const a of node.attributes) if (a.name === 'aria-label' || a.name === 'title') parts.push(a.value);
      if (node.shadowRoot) walk(node.shadowRoot);
    }
    for (const child of node.childNodes) walk(child);
  };
  walk(root);
  return parts.join('\n');
}

const FOREIGN_TAGS = new Set([
  'script',
  'iframe',
  'object',
  'embed',
  'marquee',
  'audio',
  'source',
  'mglyph',
  'animate',
  'base',
  'meta',
  'link',
  'x',
  'img',
  'math',
  'noscript',
  'frame',
  'frameset',
]);

/** Problems: script-capable markup anywhere in the app's DOM. */
function hostileMarkup(app: Element): string[] {
  const problems: string[] = [];
  for (const el of deepElements(app)) {
    const tag = el.localName;
    if (FOREIGN_TAGS.has(tag)) problems.push(`<${tag}> element in the DOM`);
    for (const a of el.attributes) {
      if (/^on/i.test(a.name)) problems.push(`${a.name} attribute on <${tag}>`);
      if (/^(href|src|action|formaction|data|xlink:href)$/i.test(a.name) && /^\s*javascript:/i.test(a.value))
        problems.push(`${a.name}=javascript: on <${tag}>`);
      if (a.name === 'style' && /javascript:|expression\(/i.test(a.value)) problems.push(`script in a style attribute on <${tag}>`);
    }
  }
  return problems;
}

async function until<T>(what: string, fn: () => T | null | undefined | false, ms = 15_000): Promise<T> {
  const end = performance.now() + ms;
  for (;;) {
    const v = fn();
    if (v) return v;
    if (performance.now() > end) throw new Error(`Timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 25));
  }
}

/** Waits for renders to settle and for any error/load event a payload could trigger. */
async function settle(app: TmApp): Promise<void> {
  await app.updateComplete;
  await new Promise((r) => setTimeout(r, 150));
}

/** A fictional worksheet whose every text field holds payload i (or all payloads, in its rows). */
function hostileWorksheet(clock: FixedClock, i: number, allRows: boolean): Worksheet {
  const ctx = { clock };
  const p = PAYLOADS[i]!;
  let ws = createWorksheet(ctx, { label: p.slice(0, 60).trim() || 'x', displayOffset: 0, weightKg: 70 });
  ws = setFacts(ctx, ws, { timeZero: { time: new Date(T0).toISOString(), offset: 0, basis: 'other', reason: p } }).worksheet;
  const list = allRows ? PAYLOADS : [p];
  list.forEach((q, j) => {
    ws = addRow(ctx, ws, new Date(T0 + (j + 1) * 60_000).toISOString(), 0, {
      note: { value: q },
      antibiotic: { value: q },
      cultures_drawn: { value: true, text: q },
      hr: { value: 100 + j },
    }).worksheet;
  });
  ws = setDerivedColumns(
    ctx,
    ws,
    list.slice(0, allRows ? 8 : 1).map((q, j) => ({ key: `own_col_${j}`, label: q.slice(0, 80), expression: 'hr * 2' })),
  ).worksheet;
  ws = setCustomGoals(
    ctx,
    ws,
    list
      .slice(0, allRows ? 12 : 1)
      .map((q, j) => ({ id: `own-goal-${j}`, label: q.slice(0, 120), target: 'hr < 90', deadlineMinutes: 60 })),
  ).worksheet;
  ws = { ...ws, columns: [...ws.columns.filter((c) => !c.startsWith('own_col_')), ...ws.derivedColumns.map((d) => d.key)] };
  return ws;
}

describe('hostile text renders as inert text', () => {
  it(`shows ${PAYLOADS.length} classic payloads in every text field without running or parsing any of them`, async () => {
    const clock = new FixedClock(T0 + 90 * 60_000);
    const store = await openStore({ name: `tm-xss-${Math.random().toString(36).slice(2)}`, broadcast: false });
    stores.push(store);
    const sheets = PAYLOADS.map((_p, i) => hostileWorksheet(clock, i, i === 0));
    for (const ws of sheets) expect((await store.create(ws)).ok, `stored worksheet ${ws.label}`).to.equal(true);
    const app = document.createElement('tm-app');
    app.clock = clock;
    app.store = store;
    document.body.append(app);
    apps.push(app);
    const grid = () => app.shadowRoot?.querySelector('tm-grid') as (HTMLElement & { worksheet?: Worksheet }) | null;
    await until('the first worksheet', () => grid()?.worksheet);

    const problems: string[] = [];
    let screens = 0;
    const look = async (where: string, expectText: string[]) => {
      await settle(app);
      screens += 1;
      problems.push(...hostileMarkup(app).map((p) => `${where}: ${p}`));
      const text = deepText(app).replace(/\s+/g, ' ');
      for (const t of expectText) if (!text.includes(t.replace(/\s+/g, ' ').trim())) problems.push(`${where}: "${t}" not shown as text`);
    };
    const internals = app as unknown as { open(id: string): Promise<void>; panel: string; showTrends: boolean };

    // Worksheet 0 holds every payload in its rows, columns and goals: every panel in turn.
    await internals.open(sheets[0]!.id);
    await until('worksheet 0 shown', () => grid()?.worksheet?.id === sheets[0]!.id);
    await look('grid, goals, trends', [...PAYLOADS.map((p) => p.slice(0, 60).trim())]);
    for (const panel of ['facts', 'exports', 'columns', 'own-goals']) {
      internals.panel = panel;
      await look(`panel ${panel}`, [PAYLOADS[0]!]);
    }
    internals.panel = 'none';
    // Each other worksheet: its label and time-zero reason in the header and the notebook list.
    for (const ws of sheets.slice(1)) {
      await internals.open(ws.id);
      await until(`worksheet ${ws.label}`, () => grid()?.worksheet?.id === ws.id);
      await look(`worksheet "${ws.label}"`, [ws.label, ws.timeZero!.reason!]);
    }

    // Imported files, through the real file input of the exports panel.
    internals.panel = 'exports';
    await settle(app);
    const exportsEl = await until('exports panel', () => app.shadowRoot?.querySelector('tm-exports'));
    const pick = async (name: string, text: string) => {
      const input = await until('file input', () => exportsEl.shadowRoot?.querySelector<HTMLInputElement>('input[type="file"]'));
      const dt = new DataTransfer();
      dt.items.add(new File([text], name, { type: 'application/json' }));
      input.files = dt.files;
      input.dispatchEvent(new Event('change', { bubbles: true }));
      await new Promise((r) => setTimeout(r, 300));
    };
    // A valid backup whose worksheets clash with the ones here: the clash list shows the labels.
    await pick('hostile-backup.json', backupToJson(createBackup(sheets.slice(0, 10), clock)));
    await until('the clash choices', () => exportsEl.shadowRoot?.querySelector('select'));
    await look(
      'import clash list',
      sheets.slice(0, 10).map((s) => s.label),
    );
    // A file that is not a backup, with hostile keys and values: the problems list shows them.
    const hostileKeys = Object.fromEntries(PAYLOADS.slice(0, 10).map((p) => [p, p]));
    await pick('hostile-keys.json', JSON.stringify({ format: 'tidemark-backup', version: 1, ...hostileKeys }));
    await until('the problems list', () => exportsEl.shadowRoot?.querySelector('ul.error'));
    await look('import problems list', []);
    // A valid backup of new worksheets with hostile labels: imported and listed as text.
    const fresh = PAYLOADS.map((_p, i) => ({ ...hostileWorksheet(clock, i, false), id: `imported-${i}` }));
    await pick('hostile-new.json', backupToJson(createBackup(fresh, clock)));
    await until('the import', () => exportsEl.shadowRoot?.textContent?.includes('Imported:'));
    await look(
      'notebook after import',
      fresh.map((s) => s.label),
    );

    expect(problems, problems.slice(0, 10).join('\n')).to.deep.equal([]);
    expect(hits, `payloads that ran: ${hits.join(', ')}`).to.deep.equal([]);
    expect(screens).to.be.greaterThan(PAYLOADS.length);
    // Sanity: the same checks do catch a payload parsed as HTML deep inside the app (this page
    // has no CSP, so it runs), and the canary works.
    const probe = document.createElement('div');
    grid()!.shadowRoot!.append(probe);
    // eslint-disable-next-line no-restricted-syntax -- on purpose: proves the checks catch markup parsed as HTML
    probe.innerHTML = PAYLOADS[1]!;
    await new Promise((r) => setTimeout(r, 300));
    expect(hostileMarkup(app)).to.deep.equal(['<img> element in the DOM', 'onerror attribute on <img>']);
    expect(hits).to.deep.equal([2]);
    probe.remove();
    hits.length = 0;
  });
});
