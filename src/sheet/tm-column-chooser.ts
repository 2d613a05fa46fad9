/**
 * `<tm-column-chooser>`: shows or hides the worksheet's columns and moves them left or right.
 * Used inside `<tm-grid>`; plain buttons and checkboxes, so it works with the keyboard alone.
 *
 * @fires tm-columns {CustomEvent<TmColumnsDetail>} the visible columns in their new order
 *   (bubbles, composed). The chooser changes nothing itself: the owner stores the new order and
 *   passes it back down through `columns`.
 */
import { LitElement, css, html, nothing } from 'lit';
import { customElement, property } from 'lit/decorators.js';
import { live } from 'lit/directives/live.js';
import { repeat } from 'lit/directives/repeat.js';

/** One column the chooser can offer. */
export interface ColumnOption {
  key: string;
  /** Short label shown in the grid header ("MAP"). */
  label: string;
  /** Full name ("Mean arterial pressure"). */
  title: string;
  /** Unit label, empty when none. */
  unit: string;
  /** True for calculated (read-only) columns. */
  calculated: boolean;
}

export interface TmColumnsDetail {
  columns: string[];
}

type FocusAfter = { key: string; control: 'left' | 'right' | 'toggle' };

@customElement('tm-column-chooser')
export class TmColumnChooser extends LitElement {
  /** Visible column keys, in order. */
  @property({ attribute: false }) columns: readonly string[] = [];
  /** Every column that can be shown. */
  @property({ attribute: false }) options: readonly ColumnOption[] = [];

  /** Where focus goes once the owner has passed the new order back (moved rows are re-rendered). */
  private focusAfter: FocusAfter | undefined;

  static override styles = css`
    :host {
      display: block;
      font: inherit;
      color: var(--tm-ink, #17212b);
    }
    .lists {
      display: grid;
      grid-template-columns: repeat(auto-fit, minmax(17rem, 1fr));
      gap: 1rem 2rem;
    }
    h3 {
      font-size: 1rem;
      font-weight: 650;
      margin: 0 0 0.5rem;
    }
    ol, ul {
      list-style: none;
      margin: 0;
      padding: 0;
      max-height: 22rem;
      overflow: auto;
      border: 1px solid var(--tm-line, #b9c3cb);
      border-radius: 6px;
      background: var(--tm-cell, #ffffff);
    }
    li {
      display: flex;
      align-items: center;
      gap: 0.5rem;
      min-height: 2.75rem;
      padding: 0 0.5rem;
      border-bottom: 1px solid var(--tm-line-soft, #dde3e8);
    }
    li:last-child {
      border-bottom: none;
    }
    label {
      flex: 1;
      display: flex;
      align-items: center;
      gap: 0.6rem;
      min-height: 2.75rem;
      cursor: pointer;
    }
    input[type='checkbox'] {
      width: 1.25rem;
      height: 1.25rem;
      accent-color: var(--tm-accent, #0f5c6e);
    }
    .unit, .calc {
      color: var(--tm-ink-soft, #4a5763);
      font-size: 0.875rem;
    }
    .calc {
      font-style: italic;
    }
    button {
      font: inherit;
      min-width: 2.75rem;
      min-height: 2.75rem;
      border: 1px solid var(--tm-line, #b9c3cb);
      border-radius: 6px;
      background: var(--tm-cell, #ffffff);
      color: var(--tm-ink, #17212b);
      cursor: pointer;
    }
    button:disabled {
      opacity: 0.45;
      cursor: default;
    }
    button:focus-visible, input:focus-visible {
      outline: 3px solid var(--tm-accent, #0f5c6e);
      outline-offset: 2px;
    }
    .empty {
      padding: 0.75rem;
      color: var(--tm-ink-soft, #4a5763);
    }
  `;

  private option(key: string): ColumnOption {
    return this.options.find((o) => o.key === key) ?? { key, label: key, title: key, unit: '', calculated: false };
  }

  private emit(columns: string[], focusAfter: FocusAfter): void {
    this.focusAfter = focusAfter;
    this.dispatchEvent(new CustomEvent<TmColumnsDetail>('tm-columns', { detail: { columns }, bubbles: true, composed: true }));
  }

  private move(key: string, by: -1 | 1): void {
    const cols = [...this.columns];
    const i = cols.indexOf(key);
    const j = i + by;
    if (i < 0 || j < 0 || j >= cols.length) return;
    [cols[i], cols[j]] = [cols[j]!, cols[i]!];
    this.emit(cols, { key, control: by < 0 ? 'left' : 'right' });
  }

  private toggle(key: string, show: boolean): void {
    const cols = this.columns.filter((k) => k !== key);
    if (show) cols.push(key);
    this.emit(cols, { key, control: 'toggle' });
  }

  protected override updated(): void {
    const f = this.focusAfter;
    if (!f) return;
    // Focus the control the person used, on its item's new place (or the first usable one).
    const item = this.renderRoot.querySelector<HTMLElement>(`[data-key="${f.key}"]`);
    if (!item) return;
    this.focusAfter = undefined;
    const wanted = item.querySelector<HTMLButtonElement | HTMLInputElement>(`[data-control="${f.control}"]:not(:disabled)`);
    (wanted ?? item.querySelector<HTMLElement>('[data-control="toggle"]'))?.focus();
  }

  private renderShown(key: string, index: number, count: number) {
    const o = this.option(key);
    return html`<li data-key=${key}>
      <label>
        <input type="checkbox" data-control="toggle" .checked=${live(true)} @change=${() => this.toggle(key, false)} />
        <span>${o.label} <span class="unit">${o.unit}</span> ${o.calculated ? html`<span class="calc">calc</span>` : nothing}</span>
      </label>
      <button type="button" data-control="left" aria-label=${`Move ${o.label} left`} title="Move left" ?disabled=${index === 0} @click=${() => this.move(key, -1)}>←</button>
      <button type="button" data-control="right" aria-label=${`Move ${o.label} right`} title="Move right" ?disabled=${index === count - 1} @click=${() => this.move(key, 1)}>→</button>
    </li>`;
  }

  private renderHidden(o: ColumnOption) {
    return html`<li data-key=${o.key}>
      <label title=${o.title}>
        <input type="checkbox" data-control="toggle" .checked=${live(false)} @change=${() => this.toggle(o.key, true)} />
        <span>${o.label} <span class="unit">${o.unit}</span> ${o.calculated ? html`<span class="calc">calc</span>` : nothing}</span>
      </label>
    </li>`;
  }

  protected override render() {
    const shown = this.columns.filter((k) => this.options.some((o) => o.key === k));
    const hidden = this.options.filter((o) => !shown.includes(o.key));
    return html`<div class="lists">
      <section aria-labelledby="shown-h">
        <h3 id="shown-h">Shown, left to right</h3>
        ${
          shown.length === 0
            ? html`<p class="empty">No columns shown.</p>`
            : html`<ol>${repeat(
                shown,
                (k) => k,
                (k, i) => this.renderShown(k, i, shown.length),
              )}</ol>`
        }
      </section>
      <section aria-labelledby="hidden-h">
        <h3 id="hidden-h">Hidden</h3>
        ${
          hidden.length === 0
            ? html`<p class="empty">Every column is shown.</p>`
            : html`<ul>${repeat(
                hidden,
                (o) => o.key,
                (o) => this.renderHidden(o),
              )}</ul>`
        }
      </section>
    </div>`;
  }
}

declare global {
  interface HTMLElementTagNameMap {
    'tm-column-chooser': TmColumnChooser;
  }
  interface HTMLElementEventMap {
    'tm-columns': CustomEvent<TmColumnsDetail>;
  }
}
