// <tm-app> keeps its print layout (note timeline, trends, every value) out of the page until the
// browser is about to print, so editing a long worksheet does not rebuild it each time. Printing
// must still show it: the HTML standard's printing steps fire `beforeprint` and then lay the page
// out for print, and when script calls print() that layout happens before any microtask runs
// (https://html.spec.whatwg.org/multipage/timers-and-user-prompts.html#printing), so the layout
// has to be complete when the `beforeprint` listeners return. Data: the app's fictional demo.
import { expect } from 'chai';
import '../../src/app/zod-setup.js';
import { demoWorksheet } from '../../src/app/demo-scenario.js';
import '../../src/app/tm-app.js';
import type { TmApp } from '../../src/app/tm-app.js';
import { FixedClock } from '../../src/sheet/clock.js';
import { openStore, type Store } from '../../src/storage/store.js';

const NOW = Date.parse('2026-03-01T10:10:00Z');
let store: Store | undefined;
let app: TmApp | undefined;

afterEach(() => {
  app?.remove();
  store?.close();
  app = undefined;
  store = undefined;
});

async function until<T>(what: string, fn: () => T | null | undefined | false, ms = 20_000): Promise<T> {
  const end = performance.now() + ms;
  for (;;) {
    const v = fn();
    if (v) return v;
    if (performance.now() > end) throw new Error(`Timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 25));
  }
}

describe('tm-app: print layout on demand', () => {
  it('is absent on screen, complete as soon as beforeprint returns, and gone after printing', async () => {
    store = await openStore({ name: `tm-print-test-${Math.random().toString(36).slice(2)}`, broadcast: false });
    const ws = demoWorksheet(NOW);
    expect((await store.create(ws)).ok).to.equal(true);
    app = document.createElement('tm-app');
    app.clock = new FixedClock(NOW);
    app.store = store;
    document.body.append(app);
    const root = app.shadowRoot!;
    await until('the worksheet in the grid', () => root.querySelector('tm-grid')?.shadowRoot?.querySelector('tbody tr[role="row"]'));
    expect(root.querySelector('tm-print')).to.equal(null);

    // Synchronously, as window.print() called from a button would need it.
    window.dispatchEvent(new Event('beforeprint'));
    const print = root.querySelector('tm-print');
    expect(print, 'print layout rendered').to.not.equal(null);
    const text = print!.shadowRoot?.textContent ?? '';
    expect(text).to.include(ws.label);
    expect(text).to.include('Goals');
    // The nested trends of the print layout are rendered too.
    expect(print!.shadowRoot?.querySelector('tm-trends')?.shadowRoot?.childElementCount ?? 0).to.be.above(0);

    window.dispatchEvent(new Event('afterprint'));
    await app.updateComplete;
    expect(root.querySelector('tm-print')).to.equal(null);
  });
});
