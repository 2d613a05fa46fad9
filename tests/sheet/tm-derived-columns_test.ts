// <tm-derived-columns> in Chromium: live preview values against an independent computation, a
// position caret for a formula that cannot be read, a named dependency loop, refused keys and
// constructs, saving only when valid, keyboard use, and an axe-core scan. Fictional worksheet.
import { expect } from 'chai';
import { sendKeys } from '@web/test-runner-commands';
import '../../src/sheet/tm-derived-columns.js';
import type { DerivedColumnsEvent, TmDerivedColumns } from '../../src/sheet/tm-derived-columns.js';
import type { Worksheet } from '../../src/sheet/model.js';
import { editorsWorksheet, FIX_NOW, FIX_ROWS } from './formula-editors-fixture.js';
import { loadAxe } from '../helpers/axe.js';

const mounted: HTMLElement[] = [];
afterEach(() => {
  for (const el of mounted.splice(0)) el.remove();
});

async function mount(ws: Worksheet = editorsWorksheet()): Promise<{ el: TmDerivedColumns; events: DerivedColumnsEvent[] }> {
  const el = document.createElement('tm-derived-columns');
  el.worksheet = ws;
  el.now = FIX_NOW;
  const events: DerivedColumnsEvent[] = [];
  el.addEventListener('tm-derived-columns', (e) => events.push(e));
  document.body.append(el);
  mounted.push(el);
  await el.updateComplete;
  return { el, events };
}

const root = (el: TmDerivedColumns): ShadowRoot => el.shadowRoot!;
const $ = <T extends Element = HTMLElement>(el: TmDerivedColumns, sel: string): T => {
  const found = root(el).querySelector<T>(sel);
  if (!found) throw new Error(`no ${sel}`);
  return found;
};

/** The input of `field` in the open editor. */
function field(el: TmDerivedColumns, name: string): HTMLInputElement {
  return $<HTMLInputElement>(el, `.editor input[name="${name}"]`);
}

/** The message container of a field (role=alert). */
function message(el: TmDerivedColumns, name: string): HTMLElement {
  return $(el, `#${field(el, name).id}-msg`);
}

/** Types with real key presses into a field of the open editor. */
async function type(el: TmDerivedColumns, name: string, text: string): Promise<void> {
  const input = field(el, name);
  input.focus();
  input.select();
  if (input.value !== '') await sendKeys({ press: 'Backspace' });
  await sendKeys({ type: text });
  await el.updateComplete;
}

async function addColumn(el: TmDerivedColumns, key: string, label: string, expression: string): Promise<void> {
  $<HTMLButtonElement>(el, '#add').click();
  await el.updateComplete;
  await type(el, 'key', key);
  await type(el, 'label', label);
  await type(el, 'expression', expression);
}

async function save(el: TmDerivedColumns): Promise<void> {
  $<HTMLButtonElement>(el, '#save').click();
  await el.updateComplete;
}

/** Preview table cells: [time, value] per row. */
function previewCells(el: TmDerivedColumns): string[][] {
  return [...root(el).querySelectorAll('.editor table.preview tbody tr')].map((tr) =>
    [...tr.querySelectorAll('td')].map((td) => td.textContent.trim()),
  );
}

/** Up to 3 decimals, trailing zeros dropped: written here, not imported, to check the element. */
const three = (x: number): string => String(Number(x.toFixed(3)));

describe('tm-derived-columns: live preview', () => {
  it('previews a shock index HR/SBP at each row of the fixture, and says why the last row has none', async () => {
    const { el, events } = await mount();
    await addColumn(el, 'si', 'Shock index (mine)', 'hr / sbp');
    // Shock index = HR / SBP (common practice, no source), from the fixture's own HR and SBP.
    const expected = FIX_ROWS.map((r) => (r.sbp === undefined ? 'no value: needs sbp' : three(r.hr / r.sbp)));
    expect(previewCells(el)).to.deep.equal([
      ['08:00', expected[0]],
      ['08:40', expected[1]],
      ['09:10', expected[2]],
      ['09:40', expected[3]],
    ]);
    expect(expected.slice(0, 3)).to.deep.equal(['1.476', '1.217', '1.03']);
    expect(message(el, 'expression').textContent.trim()).to.equal('');
    expect(field(el, 'expression').getAttribute('aria-invalid')).to.equal('false');
    await save(el);
    expect(events).to.have.length(1);
    expect(events[0]!.columns).to.deep.equal([{ key: 'si', label: 'Shock index (mine)', expression: 'hr / sbp' }]);
  });

  it('previews crystalloid per kg from the running total and the weight fact', async () => {
    const { el } = await mount();
    await addColumn(el, 'ml_per_kg', 'Fluid per kg', 'fluid_total_ml / weight');
    // Crystalloid since time zero: 0, 1000, 2100, 2100 mL over 72 kg (fixture), summed by hand.
    expect(previewCells(el).map((r) => r[1])).to.deep.equal([0, 1000, 2100, 2100].map((ml) => three(ml / 72)));
  });
});

describe('tm-derived-columns: problems', () => {
  it('puts a caret under the character a formula cannot be read at, and Save sends nothing', async () => {
    const { el, events } = await mount();
    await addColumn(el, 'si', 'Shock index (mine)', 'hr / * sbp');
    const msg = message(el, 'expression');
    expect(msg.getAttribute('role')).to.equal('alert');
    expect(msg.textContent).to.contain('At character 6');
    expect(msg.querySelector('pre.caret mark')!.textContent).to.equal('*');
    expect(msg.querySelector('pre.caret .pointer')!.textContent).to.equal('     ^');
    expect(field(el, 'expression').getAttribute('aria-invalid')).to.equal('true');
    expect(root(el).querySelector('.editor table.preview')).to.equal(null);
    await save(el);
    expect(events).to.have.length(0);
    expect($(el, '.status').textContent).to.contain('Not saved');
    expect(root(el).activeElement).to.equal(field(el, 'expression'));
  });

  it('names a dependency loop a → b → a', async () => {
    const { el, events } = await mount();
    await addColumn(el, 'a', 'A', 'b + 1');
    await addColumn(el, 'b', 'B', 'a * 2');
    expect(message(el, 'expression').textContent).to.contain('a → b → a');
    await save(el);
    expect(events).to.have.length(0);
  });

  it('refuses a key that is a measure key or a built-in derived key', async () => {
    const { el, events } = await mount();
    await addColumn(el, 'map', 'My MAP', 'sbp / 3 + dbp * 2 / 3');
    expect(message(el, 'key').textContent).to.contain('"map" is already a charted measure');
    await type(el, 'key', 'shock_index');
    expect(message(el, 'key').textContent).to.contain('"shock_index" is already a built-in derived measure');
    expect(field(el, 'key').getAttribute('aria-invalid')).to.equal('true');
    await save(el);
    expect(events).to.have.length(0);
    await type(el, 'key', 'map_est');
    expect(message(el, 'key').textContent.trim()).to.equal('');
    await save(el);
    expect(events).to.have.length(1);
  });

  // mathjs security notes (docs/expressions/security.md): import, function definitions and
  // property access are the ways out of a sandboxed expression; each is refused with a position.
  for (const [text, pos, words] of [
    ['import("x")', 1, 'cannot be used in a formula'],
    ['f(x)=x', 5, 'defining a function'],
    ['cos.constructor', 4, 'property or index access'],
  ] as const) {
    it(`refuses ${text} with a message at character ${pos}`, async () => {
      const { el, events } = await mount();
      await addColumn(el, 'x', 'X', text);
      const msg = message(el, 'expression');
      expect(msg.textContent).to.contain(`At character ${pos}`);
      expect(msg.textContent).to.contain(words);
      expect(root(el).querySelector('.editor table.preview')).to.equal(null);
      await save(el);
      expect(events).to.have.length(0);
    });
  }
});

describe('tm-derived-columns: list and keyboard', () => {
  it('lists the worksheet columns, removes one and saves the empty list', async () => {
    const { el, events } = await mount(editorsWorksheet({ columns: true }));
    const items = root(el).querySelectorAll('ul.items > li');
    expect(items).to.have.length(1);
    expect(items[0]!.textContent).to.contain('fluid_per_h');
    $<HTMLButtonElement>(el, 'ul.items > li button.danger').click();
    await el.updateComplete;
    expect(root(el).querySelectorAll('ul.items > li')).to.have.length(0);
    await save(el);
    expect(events.map((e) => e.columns)).to.deep.equal([[]]);
  });

  it('saves with Enter in a field and closes the editor with Escape, focus back on its Edit button', async () => {
    const { el, events } = await mount();
    await addColumn(el, 'pp_ratio', 'Pulse pressure share', '(sbp - dbp) / sbp');
    const edit = $<HTMLButtonElement>(el, 'ul.items > li button[aria-expanded]');
    expect(edit.getAttribute('aria-expanded')).to.equal('true');
    field(el, 'unit').focus();
    await sendKeys({ press: 'Enter' });
    await el.updateComplete;
    expect(events).to.have.length(1);
    expect(events[0]!.columns[0]!.expression).to.equal('(sbp - dbp) / sbp');
    field(el, 'label').focus();
    await sendKeys({ press: 'Escape' });
    await el.updateComplete;
    await el.updateComplete;
    expect(root(el).querySelector('.editor')).to.equal(null);
    expect(root(el).activeElement).to.equal(edit);
    expect(edit.getAttribute('aria-expanded')).to.equal('false');
  });

  it('lists the names a formula may use: measures, derived keys, facts, helpers, functions', async () => {
    const { el } = await mount(editorsWorksheet({ columns: true }));
    $<HTMLButtonElement>(el, '#add').click();
    await el.updateComplete;
    const help = $(el, '.editor details.help').textContent;
    for (const name of [
      'lactate',
      'uo_ml',
      'shock_index',
      'fluid_ml_kg',
      'sofa',
      'dosing_weight',
      'baseline_sbp',
      'prev(key)',
      'running_sum(key)',
      'sqrt()',
      'fluid_per_h',
    ]) {
      expect(help, name).to.contain(name);
    }
  });
});

describe('tm-derived-columns: accessibility', () => {
  it('has no serious or critical axe-core violation with a preview, an error and the names list open', async () => {
    const { el } = await mount(editorsWorksheet({ columns: true }));
    await addColumn(el, 'si', 'Shock index (mine)', 'hr / sbp');
    await addColumn(el, 'bad', 'Bad', 'hr +* 2');
    $<HTMLDetailsElement>(el, '.editor details.help').open = true;
    await save(el);
    const axe = await loadAxe();
    // Deque axe-core rule set for WCAG 2.x A/AA.
    const result = await axe.run(el, { runOnly: { type: 'tag', values: ['wcag2a', 'wcag2aa', 'wcag21aa', 'wcag22aa'] } });
    const bad = result.violations.filter((v) => v.impact === 'serious' || v.impact === 'critical');
    expect(bad.map((v) => `${v.id}: ${JSON.stringify(v.nodes.slice(0, 3).map((n) => n.target))}`)).to.deep.equal([]);
  });
});
