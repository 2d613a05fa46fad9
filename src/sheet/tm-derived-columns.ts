/**
 * <tm-derived-columns>: the worksheet's own derived columns. Add, edit or remove a column (key,
 * label, formula, optional unit); the formula is checked as you type, with the character a
 * problem starts at marked, and previewed on the worksheet's rows. Save sends the columns only
 * when every one of them is valid.
 *
 * Properties: `worksheet` (the worksheet whose columns are edited), `now` (from the injected clock).
 *
 * @fires tm-derived-columns - `DerivedColumnsEvent` with `columns: DerivedColumn[]`, on a valid save.
 * @fires tm-close - the user closed the panel.
 */
import { LitElement, css, html, nothing, type PropertyValues, type TemplateResult } from 'lit';
import { customElement, property, state } from 'lit/decorators.js';
import { controls } from '../app/theme.js';
import type { Derivation } from './derived.js';
import {
  baseDerivation,
  checkColumns,
  columnDraftOf,
  formulaVocabulary,
  previewColumns,
  type ColumnDraft,
  type ColumnField,
  type ColumnsPreview,
  type FieldProblem,
} from './formula-preview.js';
import { formulaStyles, renderHelp, renderProblem } from './formula-view.js';
import type { DerivedColumn, Worksheet } from './model.js';
import { formatClock } from './time.js';

export class DerivedColumnsEvent extends Event {
  constructor(readonly columns: DerivedColumn[]) {
    super('tm-derived-columns', { bubbles: true, composed: true });
  }
}

/** Rows shown in a preview: the latest ones. */
export const PREVIEW_ROWS = 12;

interface Item {
  uid: number;
  draft: ColumnDraft;
}

/** A comparison or a logical word: the column then holds true/false, kept as 1/0. */
const TRUE_FALSE = /[<>]|==|!=|\b(?:and|or|not|xor|has)\b/;

const FIELD_ORDER: readonly ColumnField[] = ['key', 'label', 'expression', 'unit'];

@customElement('tm-derived-columns')
export class TmDerivedColumns extends LitElement {
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
        grid-template-columns: minmax(8rem, 1fr) minmax(10rem, 2fr);
        gap: 10px;
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
  /** Now, from the injected clock. */
  @property({ attribute: false }) now = 0;

  @state() private items: Item[] = [];
  @state() private openUid: number | null = null;
  @state() private touched = new Set<string>();
  @state() private tried = false;
  @state() private status = '';

  private nextUid = 1;
  private dirty = false;
  private loadedFor?: string;
  private baseFor?: Worksheet;
  private base?: Derivation;
  private previewFor?: { ws: Worksheet; items: Item[] };
  private preview?: ColumnsPreview;

  protected override willUpdate(changed: PropertyValues<this>): void {
    const ws = this.worksheet;
    if (changed.has('worksheet') && ws) {
      const sameSheet = this.loadedFor?.split(':')[0] === ws.id;
      // Reload when another worksheet or a newer version arrives, unless the user is editing.
      if (this.loadedFor !== `${ws.id}:${ws.rev}` && (!sameSheet || !this.dirty)) this.load(ws);
      this.loadedFor = `${ws.id}:${ws.rev}`;
    }
  }

  private load(ws: Worksheet): void {
    this.items = ws.derivedColumns.map((c) => ({ uid: this.nextUid++, draft: columnDraftOf(c) }));
    this.openUid = null;
    this.touched = new Set();
    this.tried = false;
    this.dirty = false;
  }

  /** The checks and previews of the current drafts (recomputed when the drafts or the worksheet change). */
  private currentPreview(ws: Worksheet): ColumnsPreview {
    if (this.baseFor !== ws || !this.base) {
      this.base = baseDerivation(ws);
      this.baseFor = ws;
    }
    if (!this.preview || this.previewFor?.ws !== ws || this.previewFor.items !== this.items) {
      this.preview = previewColumns(
        ws,
        this.base,
        this.items.map((i) => i.draft),
      );
      this.previewFor = { ws, items: this.items };
    }
    return this.preview;
  }

  private setField(uid: number, field: ColumnField, value: string): void {
    this.items = this.items.map((i) => (i.uid === uid ? { uid, draft: { ...i.draft, [field]: value } } : i));
    this.touched = new Set(this.touched).add(`${uid}:${field}`);
    this.dirty = true;
    this.status = '';
  }

  private shown(uid: number, field: ColumnField): boolean {
    return this.tried || this.touched.has(`${uid}:${field}`);
  }

  private focusLater(selector: string): void {
    void this.updateComplete.then(() => this.renderRoot.querySelector<HTMLElement>(selector)?.focus());
  }

  // An arrow function: it is handed to a template as an event listener.
  private readonly add = (): void => {
    const uid = this.nextUid++;
    this.items = [...this.items, { uid, draft: { key: '', label: '', expression: '', unit: '' } }];
    this.openUid = uid;
    this.dirty = true;
    this.status = '';
    this.focusLater(`#key-${uid}`);
  };

  private removeItem(uid: number): void {
    const at = this.items.findIndex((i) => i.uid === uid);
    const label = this.items[at]?.draft.label || this.items[at]?.draft.key || 'the new column';
    this.items = this.items.filter((i) => i.uid !== uid);
    if (this.openUid === uid) this.openUid = null;
    this.dirty = true;
    this.status = `Removed ${label}. Save to keep the change.`;
    const next = this.items[at] ?? this.items[at - 1];
    this.focusLater(next ? `#edit-${next.uid}` : '#add');
  }

  private toggle(uid: number): void {
    this.openUid = this.openUid === uid ? null : uid;
    if (this.openUid === uid) this.focusLater(`#expression-${uid}`);
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
    const preview = this.currentPreview(ws);
    const result = checkColumns(
      preview,
      this.items.map((i) => i.draft),
    );
    if (!result.ok) {
      this.tried = true;
      const bad = result.problems.findIndex((p) => Object.keys(p).length > 0);
      const item = this.items[bad]!;
      const field = FIELD_ORDER.find((f) => result.problems[bad]![f]) ?? 'expression';
      const count = result.problems.filter((p) => Object.keys(p).length > 0).length;
      this.status = `Not saved: ${count === 1 ? 'one column needs' : `${count} columns need`} a fix.`;
      this.openUid = item.uid;
      this.focusLater(`#${field}-${item.uid}`);
      return;
    }
    this.tried = false;
    this.dirty = false;
    this.status = `Saved ${result.columns.length === 1 ? 'one column' : `${result.columns.length} columns`}${this.now ? ` at ${formatClock(new Date(this.now).toISOString(), ws.displayOffset)}` : ''}.`;
    this.dispatchEvent(new DerivedColumnsEvent(result.columns));
  };

  private input(
    item: Item,
    field: ColumnField,
    label: string,
    problem: FieldProblem | undefined,
    opts: { hint?: string; mono?: boolean; formula?: boolean } = {},
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

  private previewTable(item: Item, preview: ColumnsPreview, index: number): TemplateResult {
    const ws = this.worksheet!;
    const rows = preview.rows[index];
    const unit = item.draft.unit.trim();
    if (ws.rows.length === 0) return html`<p class="empty">This worksheet has no rows yet, so there is nothing to preview.</p>`;
    if (!rows) return html`<p class="empty">No preview until the formula can be worked out.</p>`;
    const shown = rows.slice(-PREVIEW_ROWS);
    return html`<table class="preview" aria-describedby="preview-note-${item.uid}">
      <caption>Preview on this worksheet's rows</caption>
      <thead>
        <tr>
          <th scope="col">Row time</th>
          <th scope="col">${item.draft.label.trim() || item.draft.key.trim() || 'Value'}${unit ? ` (${unit})` : ''}</th>
        </tr>
      </thead>
      <tbody>
        ${shown.map(
          (r) => html`<tr data-row-id=${r.rowId}>
            <td>${r.clock}</td>
            <td class=${r.kind === 'none' ? 'none' : ''}>${r.kind === 'none' ? `no value: ${r.text}` : r.text}</td>
          </tr>`,
        )}
      </tbody>
    </table>
    <span id="preview-note-${item.uid}" class="hint"
      >${rows.length > shown.length ? `The latest ${shown.length} of ${rows.length} rows. ` : ''}${TRUE_FALSE.test(item.draft.expression) ? 'True and false are kept as 1 and 0.' : ''}</span
    >`;
  }

  private editor(item: Item, preview: ColumnsPreview, index: number): TemplateResult {
    const p = preview.problems[index] ?? {};
    const others = this.items
      .filter((i) => i.uid !== item.uid && i.draft.key.trim())
      .map((i) => ({ key: i.draft.key.trim(), label: i.draft.label.trim() || i.draft.key.trim() }));
    return html`<div class="editor" id="editor-${item.uid}" @keydown=${(e: KeyboardEvent) => this.onEditorKey(e, item.uid)}>
      <div class="pair">
        ${this.input(item, 'key', 'Key', p.key, { hint: 'Short name formulas use: lower-case letters, digits and _.', mono: true })}
        ${this.input(item, 'label', 'Label', p.label, { hint: 'Heads the column in the worksheet.' })}
      </div>
      ${this.input(item, 'expression', 'Formula', p.expression, { hint: 'For example hr / sbp. Names you can use are listed below.', mono: true, formula: true })}
      ${this.input(item, 'unit', 'Unit (optional)', p.unit, { hint: 'Shown after the label, for example mL/kg.' })}
      ${this.previewTable(item, preview, index)} ${renderHelp(formulaVocabulary(others))}
    </div>`;
  }

  private itemView(item: Item, preview: ColumnsPreview, index: number): TemplateResult {
    const d = item.draft;
    const problems = preview.problems[index] ?? {};
    const bad = Object.keys(problems).length > 0;
    const open = this.openUid === item.uid;
    const name = d.label.trim() || d.key.trim() || 'New column';
    return html`<li>
      <div class="summary">
        <span class="what"><span class="name">${name}</span>
        ${d.key.trim() ? html`<code>${d.key.trim()}</code>` : nothing}
        <code class="formula">= ${d.expression.trim() || '…'}</code>
        ${d.unit.trim() ? html`<span>${d.unit.trim()}</span>` : nothing}
        </span>
        <span class="side">
          <span class="state ${bad ? 'bad' : 'ok'}"><span aria-hidden="true">${bad ? '✕' : '✓'}</span> ${bad ? 'Needs a fix' : 'Ready'}</span>
          <button type="button" id="edit-${item.uid}" aria-expanded=${open ? 'true' : 'false'} aria-controls="editor-${item.uid}" @click=${() => this.toggle(item.uid)}>
            ${open ? 'Done' : 'Edit'}<span class="visually-hidden"> ${name}</span>
          </button>
          <button type="button" class="danger" @click=${() => this.removeItem(item.uid)}>Remove<span class="visually-hidden"> ${name}</span></button>
        </span>
      </div>
      ${open ? this.editor(item, preview, index) : nothing}
    </li>`;
  }

  override render() {
    const ws = this.worksheet;
    if (!ws) return nothing;
    const preview = this.currentPreview(ws);
    return html`<form @submit=${this.save} novalidate aria-labelledby="dc-title">
      <h2 id="dc-title">Your own columns</h2>
      <p class="intro hint">
        A column worked out at every row from a formula over the measures, for example a shock index as <code>hr / sbp</code>. The
        preview shows what each row would get.
      </p>
      <p class="caution">
        Decision support only: formulas you write are your own; check them against local protocols and licensed clinical judgment.
      </p>
      ${
        this.items.length === 0
          ? html`<p class="empty">This worksheet has no columns of its own yet.</p>`
          : html`<ul class="items" aria-label="Columns of this worksheet">
            ${this.items.map((item, i) => this.itemView(item, preview, i))}
          </ul>`
      }
      <div class="actions">
        <button type="button" id="add" @click=${this.add}>Add a column</button>
        <button type="submit" class="primary" id="save">Save columns</button>
        <button type="button" @click=${this.discard}>Discard changes</button>
        <button type="button" @click=${() => this.dispatchEvent(new Event('tm-close', { bubbles: true, composed: true }))}>Close</button>
      </div>
      <p class="status" role="status">${this.status}</p>
    </form>`;
  }
}

declare global {
  interface HTMLElementTagNameMap {
    'tm-derived-columns': TmDerivedColumns;
  }
  interface HTMLElementEventMap {
    'tm-derived-columns': DerivedColumnsEvent;
  }
}
