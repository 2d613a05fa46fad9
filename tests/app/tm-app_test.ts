// <tm-app> in Chromium with real IndexedDB and fake time: an edit typed with the keyboard is
// stored and comes back after a "reload" (a new store connection and a new app); the goal panel
// turns a pending goal missed as the clock passes its deadline, and a new row makes another goal
// met; an axe-core scan of the main screen finds no serious or critical violation.
// Goal rules come from ../shared/reference/clinical-check-values.md (cited beside each check).
import { sendKeys } from '@web/test-runner-commands';
import { expect } from 'chai';
import '../../src/app/zod-setup.js';
import { demoWorksheet } from '../../src/app/demo-scenario.js';
import '../../src/app/tm-app.js';
import type { TmApp } from '../../src/app/tm-app.js';
import type { GoalStatus } from '../../src/goals/status.js';
import { FixedClock } from '../../src/sheet/clock.js';
import { addRow, createWorksheet, setFacts } from '../../src/sheet/worksheet.js';
import { openStore, type Store } from '../../src/storage/store.js';
import { loadAxe } from '../helpers/axe.js';

const T0 = Date.parse('2026-03-01T08:00:00Z');
let stores: Store[] = [];
let apps: TmApp[] = [];

afterEach(async () => {
  for (const a of apps) a.remove();
  for (const s of stores) s.close();
  apps = [];
  stores = [];
});

function dbName(): string {
  return `tm-app-test-${Math.random().toString(36).slice(2)}`;
}

async function open(name: string): Promise<Store> {
  const s = await openStore({ name, broadcast: false });
  stores.push(s);
  return s;
}

async function until<T>(what: string, fn: () => T | null | undefined | false, ms = 10_000): Promise<T> {
  const end = performance.now() + ms;
  for (;;) {
    const v = fn();
    if (v) return v;
    if (performance.now() > end) throw new Error(`Timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 25));
  }
}

async function mount(store: Store, clock: FixedClock): Promise<TmApp> {
  const app = document.createElement('tm-app');
  app.clock = clock;
  app.store = store;
  document.body.append(app);
  apps.push(app);
  await app.updateComplete;
  return app;
}

const grid = (app: TmApp) => app.shadowRoot?.querySelector('tm-grid') ?? null;
const panel = (app: TmApp) => app.shadowRoot?.querySelector('tm-goal-panel') ?? null;
function goal(app: TmApp, id: string): GoalStatus | undefined {
  return panel(app)?.goals.find((g) => g.id === id);
}

describe('tm-app: edits persist across a reload', () => {
  it('stores a value typed in the grid and shows it again after the page is reopened', async () => {
    const clock = new FixedClock(T0 + 30 * 60_000);
    const ctx = { clock };
    let ws = createWorksheet(ctx, { label: 'Test bed (fictional)', displayOffset: 0, weightKg: 70 });
    ws = addRow(ctx, ws, new Date(T0).toISOString(), 0).worksheet;
    const name = dbName();
    const store = await open(name);
    expect((await store.create(ws)).ok).to.equal(true);

    const app = await mount(store, clock);
    const cell = await until('the MAP cell', () =>
      grid(app)?.shadowRoot?.querySelector<HTMLElement>(`[data-row="${ws.rows[0]!.id}"][data-col="map"]`),
    );
    cell.focus();
    await sendKeys({ type: '62' });
    await sendKeys({ press: 'Enter' });
    // Saved only after IndexedDB acknowledged it (the badge says so).
    await until('the saved badge', () => app.shadowRoot?.querySelector('.save')?.textContent?.includes('All changes saved'));

    // "Reload": drop the app and its connection, open the database again in a new app.
    app.remove();
    store.close();
    const again = await open(name);
    const stored = await again.get(ws.id);
    // 62 mmHg is kept and flagged low: MAP < 65 (SSC 2021 initial MAP target; reference file §1).
    expect(stored?.rows[0]?.cells['map']).to.deep.equal({ value: 62, flag: 'low' });
    expect(stored?.log.some((e) => e.kind === 'cell' && e.key === 'map')).to.equal(true);
    const app2 = await mount(again, clock);
    const shown = await until('the MAP cell after reload', () =>
      grid(app2)?.shadowRoot?.querySelector<HTMLElement>(`[data-row="${ws.rows[0]!.id}"][data-col="map"]`),
    );
    expect(shown.textContent?.trim()).to.match(/^62/);
  });

  it('shows a refused entry at the cell and stores nothing', async () => {
    const clock = new FixedClock(T0 + 30 * 60_000);
    const ctx = { clock };
    let ws = createWorksheet(ctx, { label: 'Test bed (fictional)', displayOffset: 0, weightKg: 70 });
    ws = addRow(ctx, ws, new Date(T0).toISOString(), 0).worksheet;
    const store = await open(dbName());
    await store.create(ws);
    const app = await mount(store, clock);
    const cell = await until('the lactate cell', () =>
      grid(app)?.shadowRoot?.querySelector<HTMLElement>(`[data-row="${ws.rows[0]!.id}"][data-col="lactate"]`),
    );
    cell.focus();
    // 45 mmol/L is outside the plausible range 0–30 (common practice, no source).
    await sendKeys({ type: '45' });
    await sendKeys({ press: 'Enter' });
    const msg = await until('the message at the cell', () => grid(app)?.shadowRoot?.querySelector('[role="alert"]')?.textContent);
    expect(msg).to.match(/outside the accepted range/);
    expect((await store.get(ws.id))?.rows[0]?.cells['lactate']).to.equal(undefined);
  });
});

describe('tm-app: goals on fake time', () => {
  it('turns the hour-1 antibiotic goal missed when the clock passes its deadline, and a new row makes it met late', async () => {
    // Hour-1 bundle: antibiotics within 1 h of time zero (triage). Levy 2018; reference file §2.
    const clock = new FixedClock(T0 + 59 * 60_000);
    const ctx = { clock };
    let ws = createWorksheet(ctx, { label: 'Clock test (fictional)', displayOffset: 0, weightKg: 70 });
    ws = setFacts(ctx, ws, { timeZero: { time: new Date(T0).toISOString(), offset: 0, basis: 'triage' } }).worksheet;
    ws = addRow(ctx, ws, new Date(T0 + 10 * 60_000).toISOString(), 0, {
      lactate: { value: 1.5 },
      cultures_drawn: { value: true },
    }).worksheet;
    const store = await open(dbName());
    await store.create(ws);
    const app = await mount(store, clock);
    await until('goal statuses', () => goal(app, 'ssc-hour1.antibiotics'));
    expect(goal(app, 'ssc-hour1.antibiotics')?.status).to.equal('pending');

    clock.set(T0 + 61 * 60_000);
    app.tick();
    await app.updateComplete;
    await until('missed antibiotics', () => goal(app, 'ssc-hour1.antibiotics')?.status === 'missed');
    const item = await until('the goal item', () => panel(app)?.shadowRoot?.querySelector('[data-goal="ssc-hour1.antibiotics"]'));
    expect(item.textContent).to.match(/Missed/);
    expect(item.textContent).to.match(/overdue 1 min/);

    // A row with the antibiotic at 09:05, entered at 09:06: the goal stays missed, done late.
    clock.set(T0 + 66 * 60_000);
    const app2 = app as unknown as { session: { addRow(t: string, o: number, c: object): { saved: Promise<boolean> } } };
    await app2.session.addRow(new Date(T0 + 65 * 60_000).toISOString(), 0, { antibiotic: { value: 'ceftriaxone' } }).saved;
    await until('late completion', () => goal(app, 'ssc-hour1.antibiotics')?.late === true);
    // The lactate goal (measure lactate) was met at 08:10, 10 min after time zero.
    expect(goal(app, 'ssc-hour1.lactate')?.status).to.equal('met');
    expect(goal(app, 'ssc-hour1.lactate')?.minutesFromTimeZero).to.equal(10);
  });

  it('turns the lactate goal met when a row with a lactate is added', async () => {
    // Hour-1 bundle element 1: measure lactate within the first hour (Levy 2018; reference file §2).
    const clock = new FixedClock(T0 + 20 * 60_000);
    const ctx = { clock };
    let ws = createWorksheet(ctx, { label: 'Lactate due (fictional)', displayOffset: 0, weightKg: 70 });
    ws = setFacts(ctx, ws, { timeZero: { time: new Date(T0).toISOString(), offset: 0, basis: 'triage' } }).worksheet;
    ws = addRow(ctx, ws, new Date(T0 + 5 * 60_000).toISOString(), 0, { map: { value: 70 } }).worksheet;
    const store = await open(dbName());
    await store.create(ws);
    const app = await mount(store, clock);
    await until('lactate goal', () => goal(app, 'ssc-hour1.lactate'));
    expect(goal(app, 'ssc-hour1.lactate')?.status).to.equal('pending');
    expect(goal(app, 'ssc-hour1.lactate')?.minutesLeft).to.equal(40);
    const app2 = app as unknown as { session: { addRow(t: string, o: number, c: object): { saved: Promise<boolean> } } };
    await app2.session.addRow(new Date(T0 + 18 * 60_000).toISOString(), 0, { lactate: { value: 3.1 } }).saved;
    await until('lactate met', () => goal(app, 'ssc-hour1.lactate')?.status === 'met');
    expect(goal(app, 'ssc-hour1.lactate')?.minutesFromTimeZero).to.equal(18);
    const item = await until('the met goal item', () => panel(app)?.shadowRoot?.querySelector('[data-goal="ssc-hour1.lactate"]'));
    expect(item.textContent).to.match(/Met/);
  });

  it('makes the repeat-lactate goal not applicable when the first lactate is 2.0 or less', async () => {
    // Re-measure only if the initial lactate is > 2 mmol/L (Levy 2018 Table 1; reference file §15 #8).
    const clock = new FixedClock(T0 + 30 * 60_000);
    const ctx = { clock };
    let ws = createWorksheet(ctx, { label: 'Lactate 2.0 (fictional)', displayOffset: 0, weightKg: 70 });
    ws = setFacts(ctx, ws, { timeZero: { time: new Date(T0).toISOString(), offset: 0, basis: 'triage' } }).worksheet;
    ws = addRow(ctx, ws, new Date(T0 + 5 * 60_000).toISOString(), 0, { lactate: { value: 2.0 } }).worksheet;
    const store = await open(dbName());
    await store.create(ws);
    const app = await mount(store, clock);
    await until('repeat lactate status', () => goal(app, 'ssc-hour1.lactate-repeat'));
    expect(goal(app, 'ssc-hour1.lactate-repeat')?.status).to.equal('not-applicable');
  });
});

describe('tm-app: accessibility of the main screen', () => {
  it('has no serious or critical axe-core violation with the demo worksheet open', async () => {
    const now = Date.parse('2026-03-01T10:10:00Z');
    const clock = new FixedClock(now);
    const store = await open(dbName());
    await store.create(demoWorksheet(now));
    const app = await mount(store, clock);
    app.welcome = true;
    await until('the grid rows', () => grid(app)?.shadowRoot?.querySelectorAll('[role="row"]').length);
    await until('the goals', () => panel(app)?.goals.length);
    await app.updateComplete;
    const axe = await loadAxe();
    // Deque axe-core rule set for WCAG 2.x A/AA.
    const result = await axe.run(app, { runOnly: { type: 'tag', values: ['wcag2a', 'wcag2aa', 'wcag21aa', 'wcag22aa'] } });
    const bad = result.violations.filter((v) => v.impact === 'serious' || v.impact === 'critical');
    expect(bad.map((v) => `${v.id}: ${JSON.stringify(v.nodes.slice(0, 3).map((n) => n.target))}`)).to.deep.equal([]);
  });
});
