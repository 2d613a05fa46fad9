/**
 * <tm-goal-panel>: the goals in force for a worksheet, unmet and soonest due first, each with a
 * status word, a symbol and its own clock. Selecting a goal asks the grid to highlight the rows
 * that satisfy or fail it; its details show the rule, its source and Tidemark's choices.
 *
 * @fires tm-goal-select - detail via `GoalSelectEvent` (`goalId` null when cleared).
 * @fires tm-goal-sets - the user changed the goal sets in force (`GoalSetsEvent`).
 */
import { LitElement, css, html, nothing } from 'lit';
import { customElement, property, state } from 'lit/decorators.js';
import { controls, STATUS_SYMBOL, STATUS_WORD } from '../app/theme.js';
import { formatDuration } from '../sheet/time.js';
import { goalTimeText, orderGoals } from './goal-order.js';
import type { GoalStatus } from './status.js';

export class GoalSelectEvent extends Event {
  constructor(
    readonly goalId: string | null,
    readonly supportRowIds: readonly string[],
    readonly failRowIds: readonly string[],
  ) {
    super('tm-goal-select', { bubbles: true, composed: true });
  }
}

export class GoalSetsEvent extends Event {
  constructor(readonly setIds: string[]) {
    super('tm-goal-sets', { bubbles: true, composed: true });
  }
}

/** A goal set the user may switch on or off. */
export interface GoalSetChoice {
  id: string;
  title: string;
  source: string;
}

@customElement('tm-goal-panel')
export class TmGoalPanel extends LitElement {
  static override styles = [
    controls,
    css`
      :host {
        display: block;
        font-family: var(--tm-font, system-ui, sans-serif);
        color: var(--tm-ink, #1c2430);
      }
      h2 {
        font-size: 1.1rem;
        margin: 0;
      }
      .head {
        display: flex;
        justify-content: space-between;
        align-items: baseline;
        gap: 8px;
        margin-bottom: 8px;
      }
      .tally {
        font-size: 0.9rem;
        color: var(--tm-ink-soft, #4a5566);
      }
      ol {
        list-style: none;
        margin: 0;
        padding: 0;
        display: grid;
        gap: 6px;
      }
      li > button.goal {
        display: grid;
        grid-template-columns: 2.2rem 1fr;
        gap: 2px 8px;
        width: 100%;
        text-align: left;
        padding: 8px 10px;
        min-height: 56px;
        border-width: 1px 1px 1px 6px;
        border-style: solid;
        border-radius: var(--tm-radius, 6px);
        background: var(--tm-surface, #fff);
        color: var(--tm-ink, #1c2430);
        font: inherit;
      }
      .sym {
        grid-row: span 3;
        font-size: 1.5rem;
        line-height: 1;
        text-align: center;
        padding-top: 2px;
        font-weight: 700;
      }
      .label {
        font-weight: 650;
      }
      .word {
        font-weight: 700;
        text-transform: uppercase;
        font-size: 0.78rem;
        letter-spacing: 0.05em;
      }
      .time {
        font-variant-numeric: tabular-nums;
      }
      .target {
        font-size: 0.9rem;
        color: var(--tm-ink-soft, #4a5566);
      }
      .s-met {
        border-color: var(--tm-met, #1f6b3a);
      }
      .s-met .sym,
      .s-met .word {
        color: var(--tm-met, #1f6b3a);
      }
      .s-pending {
        border-color: var(--tm-pending, #7a4b00);
        background: var(--tm-pending-bg, #fcf0d8);
      }
      .s-pending .sym,
      .s-pending .word {
        color: var(--tm-pending, #7a4b00);
      }
      .s-missed {
        border-color: var(--tm-missed, #a3161d);
        background: var(--tm-missed-bg, #fbe4e4);
      }
      .s-missed .sym,
      .s-missed .word {
        color: var(--tm-missed, #a3161d);
      }
      .s-not-applicable,
      .s-no-data {
        border-color: var(--tm-muted, #5c6470);
      }
      .s-not-applicable .sym,
      .s-not-applicable .word,
      .s-no-data .sym,
      .s-no-data .word {
        color: var(--tm-muted, #5c6470);
      }
      .urgent .time {
        font-weight: 700;
      }
      button.goal[aria-pressed='true'] {
        outline: 3px solid var(--tm-accent, #0e5a70);
        outline-offset: 1px;
      }
      .details {
        margin: 4px 0 6px 12px;
        padding: 8px 10px;
        border-left: 3px solid var(--tm-line, #c9cdd4);
        font-size: 0.92rem;
        display: grid;
        gap: 4px;
      }
      .details dt {
        font-weight: 700;
      }
      .details dd {
        margin: 0 0 4px;
      }
      .set-title {
        font-size: 0.78rem;
        color: var(--tm-ink-soft, #4a5566);
      }
      fieldset {
        border: 1px solid var(--tm-line, #c9cdd4);
        border-radius: var(--tm-radius, 6px);
        margin: 12px 0 0;
        padding: 8px 10px;
      }
      fieldset label {
        display: flex;
        gap: 8px;
        align-items: center;
        min-height: 36px;
      }
      fieldset input {
        min-height: 22px;
        width: 22px;
      }
      .empty {
        color: var(--tm-ink-soft, #4a5566);
      }
    `,
  ];

  @property({ attribute: false }) goals: readonly GoalStatus[] = [];
  /** Now, from the injected clock. */
  @property({ attribute: false }) now = 0;
  /** The worksheet's display offset in minutes. */
  @property({ attribute: false }) offset = 0;
  @property({ attribute: false }) sets: readonly GoalSetChoice[] = [];
  @property({ attribute: false }) activeSets: readonly string[] = [];
  /** Set when the worksheet has no time zero (all clocks wait for it). */
  @property({ attribute: false }) noTimeZero = false;

  @state() private selected: string | null = null;
  @state() private open: string | null = null;

  private select(g: GoalStatus): void {
    const same = this.selected === g.id;
    this.selected = same ? null : g.id;
    this.open = same ? null : g.id;
    this.dispatchEvent(same ? new GoalSelectEvent(null, [], []) : new GoalSelectEvent(g.id, g.supportRowIds, g.failRowIds));
  }

  private toggleSet(id: string, on: boolean): void {
    const next = this.sets.map((s) => s.id).filter((s) => (s === id ? on : this.activeSets.includes(s)));
    this.dispatchEvent(new GoalSetsEvent(next));
  }

  private targetLine(g: GoalStatus) {
    const t = g.target;
    if (!t) return nothing;
    const latest =
      t.latestValue === null
        ? 'no value yet'
        : `latest ${Number(t.latestValue.toFixed(2))} ${t.unit}${t.ageMinutes !== null ? `, ${formatDuration(t.ageMinutes * 60_000)} ago` : ''}${t.inRangeNow === null ? '' : t.inRangeNow ? ' (in range)' : ' (out of range)'}`;
    const share = t.shareInRange === null ? '' : ` · in range ${Math.round(t.shareInRange * 100)}% of charted time`;
    return html`<span class="target">target ${t.rangeText} · ${latest}${share}</span>`;
  }

  private item(g: GoalStatus) {
    const time = goalTimeText(g, this.now, this.offset);
    const urgent = g.status === 'pending' && g.deadline !== null && Date.parse(g.deadline) - this.now < 10 * 60_000;
    const detailsId = `d-${g.id.replace(/[^a-z0-9-]/gi, '_')}`;
    return html`<li>
      <button
        class="goal s-${g.status} ${urgent ? 'urgent' : ''}"
        aria-pressed=${this.selected === g.id ? 'true' : 'false'}
        aria-expanded=${this.open === g.id ? 'true' : 'false'}
        aria-controls=${detailsId}
        data-goal=${g.id}
        @click=${() => this.select(g)}
      >
        <span class="sym" aria-hidden="true">${STATUS_SYMBOL[g.status]}</span>
        <span><span class="word">${STATUS_WORD[g.status]}</span> · <span class="label">${g.label}</span></span>
        <span class="time">${time}</span>
        ${g.target ? this.targetLine(g) : html`<span class="set-title">${g.setTitle}</span>`}
      </button>
      ${
        this.open === g.id
          ? html`<dl class="details" id=${detailsId}>
            <dt>Why this status</dt>
            <dd>${g.explanation}</dd>
            <dt>Applies when</dt>
            <dd>${g.appliesWhen}</dd>
            ${g.deadlineText ? html`<dt>Deadline</dt><dd>${g.deadlineText}</dd>` : nothing}
            ${
              g.volume
                ? html`<dt>Volume</dt>
                  <dd>
                    ${Math.round(g.volume.givenMl)} mL given${g.volume.targetMl !== null ? ` of ${Math.round(g.volume.targetMl)} mL` : ''}
                    (${g.volume.mlPerKg} mL/kg${g.volume.weightKg !== null ? ` × ${g.volume.weightKg.toFixed(1)} kg` : ''}${g.volume.weightExplanation ? `, ${g.volume.weightExplanation}` : ''})
                  </dd>`
                : nothing
            }
            ${g.decision ? html`<dt>Tidemark's choice</dt><dd>${g.decision}</dd>` : nothing}
            <dt>Source</dt>
            <dd>${g.source} (${g.version})</dd>
            <dd class="set-title">Goal id ${g.id}. Rows that satisfy it are marked in the worksheet.</dd>
          </dl>`
          : nothing
      }
    </li>`;
  }

  override render() {
    const ordered = orderGoals(this.goals);
    const open = ordered.filter((g) => g.status === 'pending' || (g.status === 'missed' && !g.late)).length;
    return html`<section aria-labelledby="goals-title">
      <div class="head">
        <h2 id="goals-title">Goals</h2>
        <span class="tally" role="status">${open} still open of ${ordered.length}</span>
      </div>
      ${this.noTimeZero ? html`<p class="warning">Set time zero in the worksheet facts: deadlines count from it.</p>` : nothing}
      ${ordered.length === 0 ? html`<p class="empty">No goal set is in force. Choose one below.</p>` : nothing}
      <ol aria-label="Goals, unmet and soonest due first">
        ${ordered.map((g) => this.item(g))}
      </ol>
      <fieldset>
        <legend>Goal sets in force</legend>
        ${this.sets.map(
          (s) => html`<label title=${s.source}>
            <input type="checkbox" .checked=${this.activeSets.includes(s.id)} @change=${(e: Event) => this.toggleSet(s.id, (e.target as HTMLInputElement).checked)} />
            ${s.title}
          </label>`,
        )}
      </fieldset>
    </section>`;
  }
}

declare global {
  interface HTMLElementTagNameMap {
    'tm-goal-panel': TmGoalPanel;
  }
  interface HTMLElementEventMap {
    'tm-goal-select': GoalSelectEvent;
    'tm-goal-sets': GoalSetsEvent;
  }
}
