/**
 * <tm-custom-goals>: the worksheet's own goals. Add, edit or remove a goal (label, id made from
 * the label when left empty, optional condition, target, optional deadline in minutes from time
 * zero); each formula is checked as you type, with the character a problem starts at marked, and
 * evaluated on the worksheet's rows ("true at 08:40; false at 09:10"), with the status the goal
 * would have now. Save sends the goals only when every one of them is valid.
 *
 * Properties: `worksheet`, `now` (from the injected clock; the moment the status is judged at).
 *
 * @fires tm-custom-goals - `CustomGoalsEvent` with `goals: CustomGoal[]`, on a valid save.
 * @fires tm-close - the user closed the panel.
 */
import { LitElement, css, html, nothing, type PropertyValues, type TemplateResult } from 'lit';
import { customElement, property, state } from 'lit/decorators.js';
import { controls, STATUS_SYMBOL, STATUS_WORD } from '../app/theme.js';
import type { Derivation } from '../sheet/derived.js';
import {
  checkFormula,
  checkGoals,
  evaluateFormulaOnRows,
  formulaVocabulary,
  goalDerivation,
  goalDraftOf,
  goalProblems,
  outcomeSummary,
  resolvedGoalIds,
  type FieldProblem,
  type GoalDraft,
  type GoalField,
  type RowOutcome,
} from '../sheet/formula-preview.js';
import { formulaStyles, renderHelp, renderProblem } from '../sheet/formula-view.js';
import type { CustomGoal, Worksheet } from '../sheet/model.js';
import { formatClock } from '../sheet/time.js';
import { makeContext } from './context.js';
import { evaluateCustomGoals } from './custom.js';
import type { GoalStatus } from './status.js';

export class CustomGoalsEvent extends Event {
  constructor(readonly goals: CustomGoal[]) {
    super('tm-custom-goals', { bubbles: true, composed: true });
  }
}

/** Rows shown in the evaluation table: the latest ones. */
export const GOAL_PREVIEW_ROWS = 12;
/** Pause after typing before the goal's status is worked out again (it recomputes every derived value). */
export const STATUS_DELAY_MS = 250;

interface Item {
  uid: number;
  draft: GoalDraft;
}

type Problems = Partial<Record<GoalField, FieldProblem>>;

const FIELD_ORDER: readonly GoalField[] = ['label', 'id', 'condition', 'target', 'deadline'];

@customElement('tm-custom-goals')
export class TmCustomGoals extends LitElement {
  static override styles = [
    controls,
    formulaStyles,
    css`
      :host {
        display: block;
        font-family: var(--tm-font, system-ui, sans-serif);
        color: var(--tm-ink, #1c2430);
      }
      form {
        display: grid;
        gap: 12px;
      }
      h2 {
        font-size: 1.15rem;
        margin: 0;
      }
      .intro {
        margin: 0;
      }
      ul.items {
        list-style: none;
        margin: 0;
        padding: 0;
        display: grid;
        gap: 8px;
      }
      ul.items > li {
        border: 1px solid var(--tm-line, #c9cdd4);
        border-radius: var(--tm-radius, 6px);
        background: var(--tm-surface, #fff);
        padding: 8px 10px;
        display: grid;
        gap: 8px;
      }
      .summary {
        display: grid;
        grid-template-columns: minmax(0, 1fr) auto;
        gap: 6px 12px;
        align-items: center;
      }
      .what {
        display: flex;
        flex-wrap: wrap;
        gap: 2px 10px;
        align-items: baseline;
        min-width: 0;
      }
      .what .name {
        font-weight: 650;
      }
      .what .formula {
        overflow-wrap: anywhere;
      }
      .side {
        display: flex;
        gap: 8px;
        align-items: center;
      }
      .state {
        font-size: 0.88rem;
        font-weight: 600;
        white-space: nowrap;
      }
      .state.ok {
        color: var(--tm-met, #1f6b3a);
      }
      .state.bad {
        color: var(--tm-missed, #a3161d);
      }
      .editor {
        border-top: 1px solid var(--tm-line, #c9cdd4);
        padding-top: 8px;
        display: grid;
        gap: 10px;
      }
      .pair {
        display: grid;
        grid-template-columns: minmax(10rem, 2fr) minmax(8rem, 1fr);
        gap: 10px;
      }
      .rows-line {
        margin: 0;
      }
      .rows-line .lead {
        font-weight: 600;
      }
      .verdict {
        margin: 0;
        padding: 6px 10px;
        border-left: 6px solid var(--tm-line, #c9cdd4);
        background: var(--tm-paper, #f6f4ef);
      }
      .verdict .word {
        font-weight: 700;
      }
      .verdict.s-met {
        border-color: var(--tm-met, #1f6b3a);
      }
      .verdict.s-pending {
        border-color: var(--tm-pending, #7a4b00);
      }
      .verdict.s-missed {
        border-color: var(--tm-missed, #a3161d);
      }
      .empty {
        color: var(--tm-ink-soft, #4a5566);
        margin: 0;
      }
      .actions {
        display: flex;
        flex-wrap: wrap;
        gap: 8px;
        align-items: center;
      }
      .status {
        font-weight: 600;
      }
    `,
  ];

  @property({ attribute: false }) worksheet?: Worksheet;
  /** Now, from the injected clock: the moment the previewed status is judged at. */
  @property({ attribute: false }) now = 0;

  @state() private items: Item[] = [];
  @state() private openUid: number | null = null;
  @state() private touched = new Set<string>();
  @state() private tried = false;
  @state() private status = '';
  /** The open goal's status if it were saved now (worked out after a short pause in typing). */
  @state() private verdict?: { uid: number; status: GoalStatus | undefined; note?: string };

  private nextUid = 1;
  private dirty = false;
  private loadedFor?: string;
  private derivFor?: Worksheet;
  private deriv?: Derivation;
  private verdictTimer: ReturnType<typeof setTimeout> | undefined;
  private verdictKey = '';

  protected override willUpdate(changed: PropertyValues<this>): void {
    const ws = this.worksheet;
    if (changed.has('worksheet') && ws) {
      const sameSheet = this.loadedFor?.split(':')[0] === ws.id;
      if (this.loadedFor !== `${ws.id}:${ws.rev}` && (!sameSheet || !this.dirty)) this.load(ws);
      this.loadedFor = `${ws.id}:${ws.rev}`;
    }
  }

  protected override updated(): void {
    this.scheduleVerdict();
  }

  override disconnectedCallback(): void {
    super.disconnectedCallback();
    if (this.verdictTimer !== undefined) clearTimeout(this.verdictTimer);
    this.verdictTimer = undefined;
    this.verdictKey = '';
  }

  private load(ws: Worksheet): void {
    this.items = ws.customGoals.map((g) => ({ uid: this.nextUid++, draft: goalDraftOf(g) }));
    this.openUid = null;
    this.touched = new Set();
    this.tried = false;
    this.dirty = false;
  }

  private columnKeys(): string[] {
    return this.worksheet?.derivedColumns.map((c) => c.key) ?? [];
  }

  private derivation(ws: Worksheet): Derivation {
    if (this.derivFor !== ws || !this.deriv) {
      this.deriv = goalDerivation(ws);
      this.derivFor = ws;
    }
    return this.deriv;
  }

  /** Works out the open goal's status after a pause, when the goal, the worksheet or now changed. */
  private scheduleVerdict(): void {
    const ws = this.worksheet;
    const item = this.items.find((i) => i.uid === this.openUid);
    if (!ws || !item) return;
    const key = JSON.stringify([ws.id, ws.rev, this.now, item.uid, item.draft]);
    if (key === this.verdictKey) return;
    this.verdictKey = key;
    if (this.verdictTimer !== undefined) clearTimeout(this.verdictTimer);
    this.verdictTimer = setTimeout(() => {
      this.verdictTimer = undefined;
      this.verdict = { uid: item.uid, ...this.judge(ws, item) };
    }, STATUS_DELAY_MS);
  }

  private judge(ws: Worksheet, item: Item): { status: GoalStatus | undefined; note?: string } {
    const index = this.items.indexOf(item);
    const check = checkGoals([item.draft], this.columnKeys());
    if (!check.ok) return { status: undefined, note: 'The status appears once the goal has no problems.' };
    if (!ws.timeZero) return { status: undefined, note: 'Set time zero to judge this goal: its clock counts from time zero.' };
    const goal = { ...check.goals[0]!, id: resolvedGoalIds(this.items.map((i) => i.draft))[index] ?? check.goals[0]!.id };
    const t0 = Date.parse(ws.timeZero.time);
    const one: Worksheet = { ...ws, customGoals: [goal] };
    const ctx = makeContext(one, this.now, t0, this.derivation(ws).rows);
    return { status: evaluateCustomGoals(one, ctx, this.now)[0] };
  }

  private setField(uid: number, field: GoalField, value: string): void {
    this.items = this.items.map((i) => (i.uid === uid ? { uid, draft: { ...i.draft, [field]: value } } : i));
    this.touched = new Set(this.touched).add(`${uid}:${field}`);
    this.dirty = true;
    this.status = '';
  }

  private shown(uid: number, field: GoalField): boolean {
    return this.tried || this.touched.has(`${uid}:${field}`);
  }

  private focusLater(selector: string): void {
    void this.updateComplete.then(() => this.renderRoot.querySelector<HTMLElement>(selector)?.focus());
  }

  // An arrow function: it is handed to a template as an event listener.
  private readonly add = (): void => {
    const uid = this.nextUid++;
    this.items = [...this.items, { uid, draft: { id: '', label: '', condition: '', target: '', deadline: '' } }];
    this.openUid = uid;
    this.dirty = true;
    this.status = '';
    this.focusLater(`#label-${uid}`);
  };

  private removeItem(uid: number): void {
    const at = this.items.findIndex((i) => i.uid === uid);
    const label = this.items[at]?.draft.label.trim() || 'the new goal';
    this.items = this.items.filter((i) => i.uid !== uid);
    if (this.openUid === uid) this.openUid = null;
    this.dirty = true;
    this.status = `Removed ${label}. Save to keep the change.`;
    const next = this.items[at] ?? this.items[at - 1];
    this.focusLater(next ? `#edit-${next.uid}` : '#add');
  }

  private toggle(uid: number): void {
    this.openUid = this.openUid === uid ? null : uid;
    if (this.openUid === uid) this.focusLater(`#target-${uid}`);
  }

  private onEditorKey(e: KeyboardEvent, uid: number): void {
    if (e.key !== 'Escape') return;
    e.preventDefault();
    e.stopPropagation();
    this.openUid = null;
    this.focusLater(`#edit-${uid}`);
  }

  // An arrow function: it is handed to a template as an event listener.
  private readonly discard = (): void => {
    if (this.worksheet) this.load(this.worksheet);
    this.status = 'Changes discarded.';
  };

  // An arrow function: it is handed to a template as an event listener.
  private readonly save = (e: Event): void => {
    e.preventDefault();
    const ws = this.worksheet;
    if (!ws) return;
    const result = checkGoals(
      this.items.map((i) => i.draft),
      this.columnKeys(),
    );
    if (!result.ok) {
      this.tried = true;
      const bad = result.problems.findIndex((p) => Object.keys(p).length > 0);
      const item = this.items[bad]!;
      const field = FIELD_ORDER.find((f) => result.problems[bad]![f]) ?? 'target';
      const count = result.problems.filter((p) => Object.keys(p).length > 0).length;
      this.status = `Not saved: ${count === 1 ? 'one goal needs' : `${count} goals need`} a fix.`;
      this.openUid = item.uid;
      this.focusLater(`#${field}-${item.uid}`);
      return;
    }
    this.tried = false;
    this.dirty = false;
    this.status = `Saved ${result.goals.length === 1 ? 'one goal' : `${result.goals.length} goals`}${this.now ? ` at ${formatClock(new Date(this.now).toISOString(), ws.displayOffset)}` : ''}.`;
    this.dispatchEvent(new CustomGoalsEvent(result.goals));
  };

  private input(
    item: Item,
    field: GoalField,
    label: string,
    problem: FieldProblem | undefined,
    opts: { hint?: string; mono?: boolean; formula?: boolean; placeholder?: string; inputmode?: string } = {},
  ): TemplateResult {
    const id = `${field}-${item.uid}`;
    const show = this.shown(item.uid, field);
    const invalid = show && problem !== undefined;
    return html`<div class="field">
      <label for=${id}>${label}</label>
      <input
        id=${id}
        name=${field}
        class=${opts.mono ? 'mono' : ''}
        .value=${item.draft[field]}
        placeholder=${opts.placeholder ?? nothing}
        inputmode=${opts.inputmode ?? nothing}
        autocomplete="off"
        spellcheck="false"
        autocapitalize="off"
        aria-invalid=${invalid ? 'true' : 'false'}
        aria-describedby="${id}-msg${opts.hint ? ` ${id}-hint` : ''}"
        @input=${(e: Event) => this.setField(item.uid, field, (e.target as HTMLInputElement).value)}
      />
      ${opts.hint ? html`<span id="${id}-hint" class="hint">${opts.hint}</span>` : nothing}
      ${renderProblem(`${id}-msg`, opts.formula ? item.draft[field] : '', problem, show)}
    </div>`;
  }

  private outcomes(ws: Worksheet, text: string): RowOutcome[] | undefined {
    if (text.trim() === '') return undefined;
    const c = checkFormula(text, this.columnKeys());
    return c.ok ? evaluateFormulaOnRows(ws, this.derivation(ws), c.formula) : undefined;
  }

  private evaluation(item: Item): TemplateResult {
    const ws = this.worksheet!;
    if (ws.rows.length === 0) return html`<p class="empty">This worksheet has no rows yet, so there is nothing to evaluate.</p>`;
    const hasCondition = item.draft.condition.trim() !== '';
    const cond = this.outcomes(ws, item.draft.condition);
    const target = this.outcomes(ws, item.draft.target);
    const numeric = (o: RowOutcome[] | undefined): boolean => o?.some((r) => r.kind === 'number') ?? false;
    const rowsLine = (what: string, id: string, o: RowOutcome[] | undefined, waiting: string) =>
      html`<p class="rows-line" id=${id}><span class="lead">${what}:</span> ${o ? outcomeSummary(o) : waiting}</p>`;
    const lines = html`${hasCondition ? rowsLine('Applies when, on the rows', `cond-rows-${item.uid}`, cond, 'shown once the condition can be read.') : nothing}
    ${rowsLine('Target, on the rows', `target-rows-${item.uid}`, target, 'shown once the target can be read.')}
    ${
      numeric(cond) || numeric(target)
        ? html`<p class="rows-line warning">
          A formula here gives a number, not true or false; any number other than 0 counts as true. Did you mean a comparison such as
          <code>map >= 65</code>?
        </p>`
        : nothing
    }`;
    if (!target && !cond) return lines;
    const all = (target ?? cond)!;
    const shown = all.slice(-GOAL_PREVIEW_ROWS);
    const first = all.length - shown.length;
    const cell = (o: RowOutcome | undefined) =>
      o === undefined
        ? html`<td class="none">—</td>`
        : html`<td class=${o.kind === 'none' ? 'none' : o.kind === 'true' ? 'yes' : 'no'}>
            ${o.kind === 'none' ? `no value: ${o.text}` : o.kind === 'true' ? html`<span aria-hidden="true">✓ </span>true` : o.text}
          </td>`;
    return html`${lines}
      <table class="preview">
        <caption>Each row of this worksheet${first > 0 ? ` (the latest ${shown.length} of ${all.length})` : ''}</caption>
        <thead>
          <tr>
            <th scope="col">Row time</th>
            ${hasCondition ? html`<th scope="col">Applies when</th>` : nothing}
            <th scope="col">Target</th>
          </tr>
        </thead>
        <tbody>
          ${shown.map(
            (r, k) => html`<tr data-row-id=${r.rowId}>
              <td>${r.clock}${r.beforeTimeZero ? html`<span class="hint"> (before time zero, not counted)</span>` : nothing}</td>
              ${hasCondition ? cell(cond?.[first + k]) : nothing} ${cell(target?.[first + k])}
            </tr>`,
          )}
        </tbody>
      </table>`;
  }

  private verdictView(item: Item): TemplateResult {
    const v = this.verdict?.uid === item.uid ? this.verdict : undefined;
    if (!v) return html`<p class="verdict hint" role="status" id="verdict-${item.uid}">Working out the status…</p>`;
    if (!v.status) return html`<p class="verdict hint" role="status" id="verdict-${item.uid}">${v.note ?? ''}</p>`;
    const s = v.status;
    const when = this.now ? ` at ${formatClock(new Date(this.now).toISOString(), this.worksheet!.displayOffset)}` : '';
    return html`<p class="verdict s-${s.status}" role="status" id="verdict-${item.uid}">
      If saved now${when}: <span aria-hidden="true">${STATUS_SYMBOL[s.status]}</span> <span class="word">${STATUS_WORD[s.status]}</span>.
      ${s.explanation}
    </p>`;
  }

  private editor(item: Item, problems: Problems, generatedId: string): TemplateResult {
    const columns = this.worksheet?.derivedColumns.map((c) => ({ key: c.key, label: c.label })) ?? [];
    return html`<div class="editor" id="editor-${item.uid}" @keydown=${(e: KeyboardEvent) => this.onEditorKey(e, item.uid)}>
      <div class="pair">
        ${this.input(item, 'label', 'Label', problems.label, { hint: 'What the goal panel calls it.' })}
        ${this.input(item, 'id', 'Id (optional)', problems.id, {
          hint: item.draft.id.trim() ? 'Lower-case letters, digits and -.' : `Made from the label when left empty: ${generatedId}.`,
          mono: true,
          placeholder: generatedId,
        })}
      </div>
      ${this.input(item, 'condition', 'Applies when (optional)', problems.condition, {
        hint: 'A formula that is true when the goal applies, for example first(lactate) > 2. Empty: always, from time zero.',
        mono: true,
        formula: true,
      })}
      ${this.input(item, 'target', 'Target', problems.target, { hint: 'A formula that is true when the goal is met, for example map >= 65.', mono: true, formula: true })}
      ${this.input(item, 'deadline', 'Deadline, minutes from time zero (optional)', problems.deadline, {
        hint: 'With a deadline, the goal is met at the first row where the target is true. Empty: a standing target, judged at the latest row.',
        inputmode: 'numeric',
      })}
      ${this.evaluation(item)} ${this.verdictView(item)} ${renderHelp(formulaVocabulary(columns))}
    </div>`;
  }

  private itemView(item: Item, problems: Problems, id: string): TemplateResult {
    const d = item.draft;
    const bad = Object.keys(problems).length > 0;
    const open = this.openUid === item.uid;
    const name = d.label.trim() || 'New goal';
    const deadline = d.deadline.trim();
    return html`<li>
      <div class="summary">
        <span class="what"><span class="name">${name}</span>
        <code>${id}</code>
        <code class="formula"
          >${d.condition.trim() ? `when ${d.condition.trim()}: ` : ''}${d.target.trim() || '…'}${deadline ? ` by ${deadline} min` : ''}</code
        >
        </span>
        <span class="side">
          <span class="state ${bad ? 'bad' : 'ok'}"><span aria-hidden="true">${bad ? '✕' : '✓'}</span> ${bad ? 'Needs a fix' : 'Ready'}</span>
          <button type="button" id="edit-${item.uid}" aria-expanded=${open ? 'true' : 'false'} aria-controls="editor-${item.uid}" @click=${() => this.toggle(item.uid)}>
            ${open ? 'Done' : 'Edit'}<span class="visually-hidden"> ${name}</span>
          </button>
          <button type="button" class="danger" @click=${() => this.removeItem(item.uid)}>Remove<span class="visually-hidden"> ${name}</span></button>
        </span>
      </div>
      ${open ? this.editor(item, problems, id) : nothing}
    </li>`;
  }

  override render() {
    const ws = this.worksheet;
    if (!ws) return nothing;
    const drafts = this.items.map((i) => i.draft);
    const problems = goalProblems(drafts, this.columnKeys());
    const ids = resolvedGoalIds(drafts);
    return html`<form @submit=${this.save} novalidate aria-labelledby="cg-title">
      <h2 id="cg-title">Your own goals</h2>
      <p class="intro hint">
        A goal of this worksheet, written as formulas: when it applies, what meets it, and by when. Rows from time zero on are looked at.
      </p>
      <p class="caution">
        Decision support only: goals you write are your own, not a published rule; check them against local protocols and licensed clinical
        judgment.
      </p>
      ${
        this.items.length === 0
          ? html`<p class="empty">This worksheet has no goals of its own yet.</p>`
          : html`<ul class="items" aria-label="Goals of this worksheet">
            ${this.items.map((item, i) => this.itemView(item, problems[i] ?? {}, ids[i] ?? ''))}
          </ul>`
      }
      <div class="actions">
        <button type="button" id="add" @click=${this.add}>Add a goal</button>
        <button type="submit" class="primary" id="save">Save goals</button>
        <button type="button" @click=${this.discard}>Discard changes</button>
        <button type="button" @click=${() => this.dispatchEvent(new Event('tm-close', { bubbles: true, composed: true }))}>Close</button>
      </div>
      <p class="status" role="status">${this.status}</p>
    </form>`;
  }
}

declare global {
  interface HTMLElementTagNameMap {
    'tm-custom-goals': TmCustomGoals;
  }
  interface HTMLElementEventMap {
    'tm-custom-goals': CustomGoalsEvent;
  }
}
