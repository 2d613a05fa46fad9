/**
 * <tm-time-zero-suggestion>: time zero (and the septic shock time) the SEP-1 criteria point to,
 * with the rows that support them. A suggestion is only shown; it changes nothing until the user
 * chooses "Use this time".
 *
 * @fires tm-facts - `FactsEvent` with `timeZero` (basis criteria) or `shockTime` when chosen.
 * @fires tm-highlight - `HighlightEvent` with the supporting rows, to mark them in the worksheet.
 */
import { LitElement, css, html, nothing } from 'lit';
import { customElement, property } from 'lit/decorators.js';
import { FactsEvent } from '../app/tm-facts.js';
import { controls } from '../app/theme.js';
import { formatClock, formatDateTime } from '../sheet/time.js';
import type { TimeZeroSuggestion, TimeZeroSuggestions } from './suggest.js';

export class HighlightEvent extends Event {
  constructor(readonly rowIds: readonly string[]) {
    super('tm-highlight', { bubbles: true, composed: true });
  }
}

@customElement('tm-time-zero-suggestion')
export class TmTimeZeroSuggestion extends LitElement {
  static override styles = [
    controls,
    css`
      :host {
        display: block;
        font-family: var(--tm-font, system-ui, sans-serif);
      }
      h3 {
        font-size: 1rem;
        margin: 0 0 6px;
      }
      .card {
        border: 1px dashed var(--tm-accent, #0e5a70);
        border-radius: var(--tm-radius, 6px);
        padding: 10px 12px;
        margin-bottom: 10px;
        background: var(--tm-surface, #fff);
      }
      ul {
        margin: 6px 0;
        padding-left: 18px;
      }
      .buttons {
        display: flex;
        flex-wrap: wrap;
        gap: 8px;
      }
      .current {
        font-weight: 600;
      }
    `,
  ];

  @property({ attribute: false }) suggestions?: TimeZeroSuggestions;
  @property({ attribute: false }) offset = 0;
  /** Time zero and shock time already set on the worksheet (UTC ISO), to say whether they differ. */
  @property({ attribute: false }) timeZero?: string;
  @property({ attribute: false }) shockTime?: string;

  private use(s: TimeZeroSuggestion): void {
    this.dispatchEvent(
      s.kind === 'severe-sepsis'
        ? new FactsEvent({ timeZero: { time: s.time, offset: s.offset, basis: s.basis } })
        : new FactsEvent({ shockTime: s.time }),
    );
  }

  private card(s: TimeZeroSuggestion, current: string | undefined) {
    const title = s.kind === 'severe-sepsis' ? 'Time zero suggested by the SEP-1 criteria' : 'Septic shock presentation suggested';
    const same = current !== undefined && Date.parse(current) === Date.parse(s.time);
    return html`<div class="card">
      <h3>${title}: ${formatClock(s.time, this.offset)} <span class="hint">(${formatDateTime(s.time, this.offset)})</span></h3>
      <p>${s.explanation}</p>
      <ul>
        ${s.criteria.map((c) => html`<li>${formatClock(c.time, this.offset)} — ${c.reason}</li>`)}
      </ul>
      <div class="buttons">
        ${
          same
            ? html`<span class="current">✓ This is the time set now.</span>`
            : html`<button class="primary" @click=${() => this.use(s)}>
              Use ${formatClock(s.time, this.offset)} as ${s.kind === 'severe-sepsis' ? 'time zero' : 'septic shock time'}
            </button>`
        }
        <button @click=${() => this.dispatchEvent(new HighlightEvent(s.rowIds))}>Show these rows</button>
      </div>
    </div>`;
  }

  override render() {
    const s = this.suggestions;
    if (!s) return nothing;
    return html`<section aria-label="Suggested times">
      ${s.severeSepsis ? this.card(s.severeSepsis, this.timeZero) : nothing}
      ${s.septicShock ? this.card(s.septicShock, this.shockTime) : nothing}
      ${!s.severeSepsis && !s.septicShock ? html`<p class="hint">No time suggested from the rows yet.</p>` : nothing}
      ${s.notes.length ? html`<details><summary class="hint">What the suggestion does not cover</summary><ul class="hint">${s.notes.map((n) => html`<li>${n}</li>`)}</ul></details>` : nothing}
    </section>`;
  }
}

declare global {
  interface HTMLElementTagNameMap {
    'tm-time-zero-suggestion': TmTimeZeroSuggestion;
  }
  interface HTMLElementEventMap {
    'tm-highlight': HighlightEvent;
  }
}
