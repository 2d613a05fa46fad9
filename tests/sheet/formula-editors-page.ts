// Wires the fictional fixture into the formula editors on the test-only page (for screenshots).
// `?goals` shows <tm-custom-goals>; `&bad` opens an editor with a formula that cannot be read;
// `&loop` (columns) adds two columns that read each other; `&help` opens the names list.
import '../../src/sheet/tm-derived-columns.js';
import '../../src/goals/tm-custom-goals.js';
import { editorsWorksheet, FIX_NOW } from './formula-editors-fixture.js';

const params = new URLSearchParams(location.search);
const host = document.getElementById('host')!;

/** The part after the first '-' of an editor field's id ("condition-3" → "3"). */
function idSuffix(el: HTMLElement): string {
  const suffix = el.id.split('-')[1];
  if (suffix === undefined) throw new Error(`field id "${el.id}" has no suffix`);
  return suffix;
}

async function typeInto(root: ShadowRoot, selector: string, text: string): Promise<void> {
  const input = root.querySelector(selector) as HTMLInputElement;
  input.value = text;
  input.dispatchEvent(new Event('input', { bubbles: true, composed: true }));
}

async function main(): Promise<void> {
  if (params.has('goals')) {
    const el = document.createElement('tm-custom-goals');
    el.worksheet = editorsWorksheet({ columns: true, goals: true });
    el.now = FIX_NOW;
    host.append(el);
    await el.updateComplete;
    const root = el.shadowRoot!;
    (root.querySelector('#add') as HTMLButtonElement).click();
    await el.updateComplete;
    const inputs = [...root.querySelectorAll('input[name="label"]')] as HTMLInputElement[];
    const last = inputs[inputs.length - 1]!;
    last.value = 'Lactate below 2 by 6 h';
    last.dispatchEvent(new Event('input', { bubbles: true, composed: true }));
    await el.updateComplete;
    const id = idSuffix(last);
    await typeInto(root, `#condition-${id}`, 'first(lactate) > 2');
    await typeInto(root, `#target-${id}`, params.has('bad') ? 'lactate < 2 and' : 'lactate < 2');
    await typeInto(root, `#deadline-${id}`, '360');
    await el.updateComplete;
  } else {
    const el = document.createElement('tm-derived-columns');
    el.worksheet = editorsWorksheet({ columns: true });
    el.now = FIX_NOW;
    host.append(el);
    await el.updateComplete;
    const root = el.shadowRoot!;
    (root.querySelector('#add') as HTMLButtonElement).click();
    await el.updateComplete;
    const keyInput = [...root.querySelectorAll('input[name="key"]')].pop() as HTMLInputElement;
    const id = idSuffix(keyInput);
    await typeInto(root, `#key-${id}`, params.has('loop') ? 'a' : 'si');
    await typeInto(root, `#label-${id}`, params.has('loop') ? 'A' : 'Shock index (mine)');
    await typeInto(root, `#expression-${id}`, params.has('bad') ? 'hr / * sbp' : params.has('loop') ? 'b + 1' : 'hr / sbp');
    if (params.has('loop')) {
      (root.querySelector('#add') as HTMLButtonElement).click();
      await el.updateComplete;
      const k2 = [...root.querySelectorAll('input[name="key"]')].pop() as HTMLInputElement;
      const id2 = idSuffix(k2);
      await typeInto(root, `#key-${id2}`, 'b');
      await typeInto(root, `#label-${id2}`, 'B');
      await typeInto(root, `#expression-${id2}`, 'a * 2');
    }
    await el.updateComplete;
  }
  if (params.has('help')) {
    const el = host.firstElementChild as HTMLElement;
    (el.shadowRoot!.querySelector('details.help') as HTMLDetailsElement).open = true;
  }
}
void main();
