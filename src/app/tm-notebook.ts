/**
 * <tm-notebook>: the notebook's worksheets, one click away. Create, open, rename, archive and
 * delete (delete asks first, inside the list, naming the worksheet).
 *
 * @fires tm-notebook - detail `NotebookAction`.
 */
import { LitElement, css, html, nothing } from 'lit';
import { customElement, property, state } from 'lit/decorators.js';
import { formatDateTime } from '../sheet/time.js';
import { controls } from './theme.js';

/** What the notebook list needs to know of each worksheet. */
export interface NotebookEntry {
  id: string;
  label: string;
  archived: boolean;
  updatedAt: string;
  rows: number;
  demo?: boolean;
}

export type NotebookAction =
  | { type: 'open'; id: string }
  | { type: 'create'; label: string }
  | { type: 'rename'; id: string; label: string }
  | { type: 'archive'; id: string; archived: boolean }
  | { type: 'delete'; id: string };

export class NotebookEvent extends Event {
  constructor(readonly action: NotebookAction) {
    super('tm-notebook', { bubbles: true, composed: true });
  }
}

@customElement('tm-notebook')
export class TmNotebook extends LitElement {
  static override styles = [
    controls,
    css`
      :host {
        display: block;
        font-family: var(--tm-font, system-ui, sans-serif);
        color: var(--tm-ink, #1c2430);
      }
      h2 {
        font-size: 1rem;
        margin: 0 0 8px;
        text-transform: uppercase;
        letter-spacing: 0.06em;
        color: var(--tm-ink-soft, #4a5566);
      }
      ul {
        list-style: none;
        margin: 0;
        padding: 0;
        display: grid;
        gap: 6px;
      }
      li {
        border: 1px solid var(--tm-line, #c9cdd4);
        border-radius: var(--tm-radius, 6px);
        background: var(--tm-surface, #fff);
      }
      li.current {
        border-color: var(--tm-accent, #0e5a70);
        box-shadow: inset 4px 0 0 var(--tm-accent, #0e5a70);
      }
      .open {
        display: block;
        width: 100%;
        text-align: left;
        border: 0;
        background: transparent;
        padding: 8px 10px;
        min-height: 48px;
      }
      .open strong {
        display: block;
      }
      .meta {
        font-size: 0.85rem;
        color: var(--tm-ink-soft, #4a5566);
      }
      .tools {
        display: flex;
        flex-wrap: wrap;
        gap: 4px;
        padding: 0 8px 8px;
      }
      .tools button {
        min-height: 32px;
        padding: 0 8px;
        font-size: 0.9rem;
      }
      form {
        display: grid;
        gap: 6px;
        margin-bottom: 12px;
      }
      .confirm {
        padding: 8px 10px;
        display: grid;
        gap: 6px;
      }
      details summary {
        cursor: pointer;
        padding: 6px 0;
        color: var(--tm-ink-soft, #4a5566);
      }
    `,
  ];

  @property({ attribute: false }) entries: readonly NotebookEntry[] = [];
  @property({ attribute: false }) currentId?: string;

  @state() private renaming?: string;
  @state() private confirmDelete?: string;
  @state() private newError = '';

  private act(action: NotebookAction): void {
    this.dispatchEvent(new NotebookEvent(action));
  }

  // An arrow function: it is handed to a template as an event listener.
  private readonly create = (e: Event): void => {
    e.preventDefault();
    const input = (e.target as HTMLFormElement).elements.namedItem('label') as HTMLInputElement;
    const label = input.value.trim();
    if (!label) {
      this.newError = 'Give the new worksheet a bed or case code.';
      input.focus();
      return;
    }
    this.newError = '';
    input.value = '';
    this.act({ type: 'create', label });
  };

  private rename(e: Event, id: string): void {
    e.preventDefault();
    const input = (e.target as HTMLFormElement).elements.namedItem('label') as HTMLInputElement;
    const label = input.value.trim();
    if (!label) return;
    this.renaming = undefined;
    this.act({ type: 'rename', id, label });
  }

  private item(entry: NotebookEntry) {
    const current = entry.id === this.currentId;
    return html`<li class=${current ? 'current' : ''}>
      ${
        this.renaming === entry.id
          ? html`<form class="confirm" @submit=${(e: Event) => this.rename(e, entry.id)}>
            <label>New code <input name="label" .value=${entry.label} maxlength="60" /></label>
            <span><button class="primary" type="submit">Rename</button>
              <button type="button" @click=${() => (this.renaming = undefined)}>Cancel</button></span>
          </form>`
          : html`<button class="open" aria-current=${current ? 'page' : 'false'} @click=${() => this.act({ type: 'open', id: entry.id })}>
            <strong>${entry.label}</strong>
            <span class="meta">${entry.rows} rows · changed ${formatDateTime(entry.updatedAt, 0)} UTC${entry.archived ? ' · archived' : ''}</span>
          </button>`
      }
      ${
        this.confirmDelete === entry.id
          ? html`<div class="confirm" role="alertdialog" aria-label="Confirm delete">
            <span>Delete “${entry.label}” and its whole edit log? This cannot be undone.</span>
            <span
              ><button class="danger" @click=${() => {
                this.confirmDelete = undefined;
                this.act({ type: 'delete', id: entry.id });
              }}>Delete</button>
              <button @click=${() => (this.confirmDelete = undefined)}>Keep it</button></span
            >
          </div>`
          : html`<div class="tools">
            <button @click=${() => (this.renaming = entry.id)} aria-label="Rename ${entry.label}">Rename</button>
            <button @click=${() => this.act({ type: 'archive', id: entry.id, archived: !entry.archived })} aria-label="${entry.archived ? 'Restore' : 'Archive'} ${entry.label}">
              ${entry.archived ? 'Restore' : 'Archive'}
            </button>
            <button class="danger" @click=${() => (this.confirmDelete = entry.id)} aria-label="Delete ${entry.label}">Delete</button>
          </div>`
      }
    </li>`;
  }

  override render() {
    const active = this.entries.filter((e) => !e.archived);
    const archived = this.entries.filter((e) => e.archived);
    return html`<nav aria-label="Worksheets">
      <h2>Worksheets</h2>
      <form @submit=${this.create}>
        <label class="hint" for="new-label">Bed or case code — no names or record numbers</label>
        <input id="new-label" name="label" maxlength="60" placeholder="e.g. ED bay 7" aria-describedby="new-error" />
        <span id="new-error" class="error" role=${this.newError ? 'alert' : nothing}>${this.newError}</span>
        <button class="primary" type="submit">New worksheet</button>
      </form>
      <ul>
        ${active.map((e) => this.item(e))}
      </ul>
      ${
        archived.length
          ? html`<details>
            <summary>Archived (${archived.length})</summary>
            <ul>
              ${archived.map((e) => this.item(e))}
            </ul>
          </details>`
          : nothing
      }
    </nav>`;
  }
}

declare global {
  interface HTMLElementTagNameMap {
    'tm-notebook': TmNotebook;
  }
  interface HTMLElementEventMap {
    'tm-notebook': NotebookEvent;
  }
}
