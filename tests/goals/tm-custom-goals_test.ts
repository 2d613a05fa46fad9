// <tm-custom-goals> in Chromium: live evaluation on the rows against an independent comparison,
// a position caret for a formula that cannot be read, refused constructs, ids made from labels,
// the status the goal would have now, saving only when valid, keyboard use, and an axe-core
// scan. Fictional worksheet.
import { expect } from 'chai';
import { sendKeys } from '@web/test-runner-commands';
import '../../src/goals/tm-custom-goals.js';
import type { CustomGoalsEvent, TmCustomGoals } from '../../src/goals/tm-custom-goals.js';
import type { Worksheet } from '../../src/sheet/model.js';
import { editorsWorksheet, FIX_NOW, FIX_ROWS } from '../sheet/formula-editors-fixture.js';
import { loadAxe } from '../helpers/axe.js';

const mounted: HTMLElement[] = [];
afterEach(() => {
  for (const el of mounted.splice(0)) el.remove();
});

async function mount(ws: Worksheet = editorsWorksheet()): Promise<{ el: TmCustomGoals; events: CustomGoalsEvent[] }> {
  const el = document.createElement('tm-custom-goals');
  el.worksheet = ws;
  el.now = FIX_NOW;
  const events: CustomGoalsEvent[] = [];
  el.addEventListener('tm-custom-goals', (e) => events.push(e));
  document.body.append(el);
  mounted.push(el);
  await el.updateComplete;
  return { el, events };
}

const root = (el: TmCustomGoals): ShadowRoot => el.shadowRoot!;
const $ = <T extends Element = HTMLElement>(el: TmCustomGoals, sel: string): T => {
  const found = root(el).querySelector<T>(sel);
  if (!found) throw new Error(`no ${sel}`);
  return found;
};
const field = (el: TmCustomGoals, name: string): HTMLInputElement => $<HTMLInputElement>(el, `.editor input[name="${name}"]`);
const message = (el: TmCustomGoals, name: string): HTMLElement => $(el, `#${field(el, name).id}-msg`);

async function type(el: TmCustomGoals, name: string, text: string): Promise<void> {
  const input = field(el, name);
  input.focus();
  input.select();
  if (input.value !== '') await sendKeys({ press: 'Backspace' });
  await sendKeys({ type: text });
  await el.updateComplete;
}

async function addGoal(
  el: TmCustomGoals,
  g: { label: string; id?: string; condition?: string; target: string; deadline?: string },
): Promise<void> {
  $<HTMLButtonElement>(el, '#add').click();
  await el.updateComplete;
  await type(el, 'label', g.label);
  if (g.id) await type(el, 'id', g.id);
  if (g.condition) await type(el, 'condition', g.condition);
  await type(el, 'target', g.target);
  if (g.deadline) await type(el, 'deadline', g.deadline);
}

async function save(el: TmCustomGoals): Promise<void> {
  $<HTMLButtonElement>(el, '#save').click();
  await el.updateComplete;
}

async function until<T>(what: string, fn: () => T | undefined | null | false, ms = 5000): Promise<T> {
  const end = performance.now() + ms;
  for (;;) {
    const v = fn();
    if (v) return v;
    if (performance.now() > end) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 20));
  }
}

/** Row clock of the fixture (time zero 08:00 local), written here to check the element. */
const clock = (min: number): string => `${String(8 + Math.floor(min / 60)).padStart(2, '0')}:${String(min % 60).padStart(2, '0')}`;

describe('tm-custom-goals: evaluation on the rows', () => {
  it('shows where the target is true and false at each row of the fixture', async () => {
    const { el } = await mount();
    await addGoal(el, { label: 'Systolic 90 or more', target: 'sbp >= 90' });
    // The same comparison made here on the fixture's own values.
    const texts = FIX_ROWS.map((r) => (r.sbp === undefined ? 'needs sbp' : r.sbp >= 90 ? 'true' : 'false'));
    expect(texts).to.deep.equal(['false', 'true', 'true', 'needs sbp']);
    const line = $(el, '.editor [id^="target-rows-"]').textContent.replace(/\s+/g, ' ').trim();
    expect(line).to.equal(
      `Target, on the rows: false at ${clock(0)}; true at ${clock(40)} to ${clock(70)} (2 rows); needs sbp at ${clock(100)}`,
    );
    const cells = [...root(el).querySelectorAll('.editor table.preview tbody tr')].map((tr) =>
      [...tr.querySelectorAll('td')].map((td) => td.textContent.replace(/[✓\s]+/g, ' ').trim()),
    );
    expect(cells).to.deep.equal(FIX_ROWS.map((r, i) => [clock(r.min), texts[i] === 'needs sbp' ? 'no value: needs sbp' : texts[i]]));
  });

  it('evaluates the condition too, and warns when a formula gives a number instead of true/false', async () => {
    const { el } = await mount();
    await addGoal(el, { label: 'Lactate falls', condition: 'first(lactate) > 2', target: 'lactate' });
    // The first lactate of the fixture is 4.6 > 2, so the condition holds at every row.
    expect($(el, '.editor [id^="cond-rows-"]').textContent).to.contain(`true at ${clock(0)} to ${clock(100)} (4 rows)`);
    expect($(el, '.editor').textContent).to.contain('gives a number, not true or false');
  });

  it('says what status the goal would have now: met at the first row the target is true, before the deadline', async () => {
    const { el } = await mount();
    await addGoal(el, { label: 'Systolic 90 within 1 h', target: 'sbp >= 90', deadline: '60' });
    // First row with SBP >= 90 in the fixture: 40 min after time zero, inside 60 min.
    const first = FIX_ROWS.find((r) => r.sbp !== undefined && r.sbp >= 90)!;
    expect(first.min).to.be.below(60);
    const verdict = await until('the status', () => {
      const v = root(el).querySelector('.editor .verdict');
      return v && /If saved now/.test(v.textContent ?? '') ? v : undefined;
    });
    expect(verdict.getAttribute('role')).to.equal('status');
    expect(verdict.querySelector('.word')!.textContent).to.equal('Met');
    expect(verdict.textContent).to.contain(clock(first.min));
  });
});

describe('tm-custom-goals: problems', () => {
  it('puts a caret at the end of a target that stops too early, and Save sends nothing', async () => {
    const { el, events } = await mount();
    await addGoal(el, { label: 'Lactate below 2', target: 'lactate < 2 and' });
    const msg = message(el, 'target');
    expect(msg.getAttribute('role')).to.equal('alert');
    expect(msg.textContent).to.contain('At character 16');
    expect(msg.querySelector('pre.caret .pointer')!.textContent).to.equal(`${' '.repeat(15)}^`);
    expect(field(el, 'target').getAttribute('aria-invalid')).to.equal('true');
    await save(el);
    expect(events).to.have.length(0);
    expect(root(el).activeElement).to.equal(field(el, 'target'));
  });

  // mathjs security notes (docs/expressions/security.md): import, function definitions and
  // property access are refused before anything runs, with the position.
  for (const [text, pos] of [
    ['import("x")', 1],
    ['f(x)=x', 5],
    ['cos.constructor', 4],
  ] as const) {
    it(`refuses ${text} in a condition with a message at character ${pos}`, async () => {
      const { el, events } = await mount();
      await addGoal(el, { label: 'Trick', condition: text, target: 'map >= 65' });
      expect(message(el, 'condition').textContent).to.contain(`At character ${pos}`);
      expect(message(el, 'condition').textContent).to.match(/not allowed|cannot be used/);
      await save(el);
      expect(events).to.have.length(0);
    });
  }

  it('refuses a deadline that is not whole minutes, and a badly formed id', async () => {
    const { el, events } = await mount();
    await addGoal(el, { label: 'MAP', id: 'My Goal', target: 'map >= 65', deadline: '1.5' });
    expect(message(el, 'deadline').textContent).to.contain('whole minutes');
    expect(message(el, 'id').textContent).to.contain('lower-case');
    await save(el);
    expect(events).to.have.length(0);
  });
});

describe('tm-custom-goals: saving', () => {
  it('makes the id from the label, unique among the goals, and saves the deadline in minutes', async () => {
    const { el, events } = await mount(editorsWorksheet({ goals: true }));
    await addGoal(el, { label: 'SBP 90', condition: 'has(lactate)', target: 'sbp >= 90', deadline: '180' });
    // The fixture already has the goal "sbp-90".
    expect(field(el, 'id').placeholder).to.equal('sbp-90-2');
    await save(el);
    expect(events).to.have.length(1);
    expect(events[0]!.goals).to.deep.equal([
      { id: 'sbp-90', label: 'Systolic at least 90 within 1 h', target: 'sbp >= 90', deadlineMinutes: 60 },
      { id: 'sbp-90-2', label: 'SBP 90', condition: 'has(lactate)', target: 'sbp >= 90', deadlineMinutes: 180 },
    ]);
  });

  it('may use the worksheet own columns in a target', async () => {
    const { el, events } = await mount(editorsWorksheet({ columns: true }));
    await addGoal(el, { label: 'Fluid pace', target: 'fluid_per_h >= 500' });
    expect(message(el, 'target').textContent.trim()).to.equal('');
    await save(el);
    expect(events[0]!.goals[0]!.target).to.equal('fluid_per_h >= 500');
  });

  it('saves with Enter, removes a goal, and Escape closes the editor back to its Edit button', async () => {
    const { el, events } = await mount(editorsWorksheet({ goals: true }));
    $<HTMLButtonElement>(el, 'ul.items > li button[aria-expanded]').click();
    await el.updateComplete;
    await el.updateComplete;
    expect(root(el).activeElement).to.equal(field(el, 'target'));
    await sendKeys({ press: 'Escape' });
    await el.updateComplete;
    await el.updateComplete;
    expect(root(el).querySelector('.editor')).to.equal(null);
    expect(root(el).activeElement).to.equal($(el, 'ul.items > li button[aria-expanded]'));
    $<HTMLButtonElement>(el, 'ul.items > li button.danger').click();
    await el.updateComplete;
    await el.updateComplete;
    expect(root(el).activeElement).to.equal($(el, '#add'));
    await sendKeys({ press: 'Enter' });
    await el.updateComplete;
    await type(el, 'label', 'MAP 65');
    await type(el, 'target', 'map >= 65');
    await sendKeys({ press: 'Enter' });
    await el.updateComplete;
    expect(events.map((e) => e.goals)).to.deep.equal([[{ id: 'map-65', label: 'MAP 65', target: 'map >= 65' }]]);
  });
});

describe('tm-custom-goals: accessibility', () => {
  it('has no serious or critical axe-core violation with an evaluation, an error and the names list open', async () => {
    const { el } = await mount(editorsWorksheet({ goals: true, columns: true }));
    await addGoal(el, { label: 'Lactate below 2 by 6 h', condition: 'first(lactate) > 2', target: 'lactate < 2', deadline: '360' });
    await addGoal(el, { label: 'Broken', target: 'map >=' });
    $<HTMLDetailsElement>(el, '.editor details.help').open = true;
    await save(el);
    const axe = await loadAxe();
    // Deque axe-core rule set for WCAG 2.x A/AA.
    const result = await axe.run(el, { runOnly: { type: 'tag', values: ['wcag2a', 'wcag2aa', 'wcag21aa', 'wcag22aa'] } });
    const bad = result.violations.filter((v) => v.impact === 'serious' || v.impact === 'critical');
    expect(bad.map((v) => `${v.id}: ${JSON.stringify(v.nodes.slice(0, 3).map((n) => n.target))}`)).to.deep.equal([]);
  });
});
