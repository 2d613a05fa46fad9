/**
 * <tm-facts>: the worksheet's facts (label, weight, height, sex, baseline systolic pressure,
 * dosing-weight choice, time zero and its basis, septic shock time) with validation at each field.
 *
 * @fires tm-facts - detail `{ patch }` when the user saves valid facts.
 * @fires tm-close - when the user closes the panel.
 */
import { LitElement, css, html, nothing } from 'lit';
import { customElement, property, state } from 'lit/decorators.js';
import { dosingWeight } from '../sheet/body.js';
import type { Worksheet } from '../sheet/model.js';
import { formatDateTime, formatOffset } from '../sheet/time.js';
import type { Facts } from '../sheet/worksheet.js';
import { validateFacts, type FactsFields } from './facts-form.js';
import { controls } from './theme.js';

export class FactsEvent extends Event {
  constructor(readonly patch: Partial<Facts>) {
    super('tm-facts', { bubbles: true, composed: true });
  }
}

const BASIS_LABEL: Record<string, string> = {
  triage: 'Emergency triage',
  recognition: 'Clinical recognition',
  criteria: 'Criteria met (SEP-1)',
  other: 'Other (say why)',
};

function fieldsOf(ws: Worksheet): FactsFields {
  const tz = ws.timeZero;
  return {
    label: ws.label,
    weightKg: ws.weightKg?.toString() ?? '',
    heightCm: ws.heightCm?.toString() ?? '',
    sex: ws.sex ?? '',
    baselineSbp: ws.baselineSbp?.toString() ?? '',
    useIdealWeight: ws.useIdealWeight,
    timeZero: tz ? formatDateTime(tz.time, ws.displayOffset) : '',
    basis: tz?.basis ?? 'triage',
    reason: tz?.reason ?? '',
    shockTime: ws.shockTime ? formatDateTime(ws.shockTime, ws.displayOffset) : '',
  };
}

@customElement('tm-facts')
export class TmFacts extends LitElement {
  static override styles = [
    controls,
    css`
      :host {
        display: block;
        font-family: var(--tm-font, system-ui, sans-serif);
        color: var(--tm-ink, #1c2430);
      }
      form {
        display: grid;
        gap: 14px;
      }
      label {
        display: grid;
        gap: 4px;
        font-weight: 600;
      }
      .row {
        display: grid;
        grid-template-columns: 1fr 1fr;
        gap: 12px;
      }
      .check {
        display: flex;
        gap: 8px;
        align-items: flex-start;
        font-weight: 400;
      }
      .check input {
        min-height: 24px;
        width: 24px;
      }
      .actions {
        display: flex;
        gap: 8px;
      }
      h2 {
        font-size: 1.15rem;
        margin: 0 0 4px;
      }
      fieldset {
        border: 1px solid var(--tm-line, #c9cdd4);
        border-radius: var(--tm-radius, 6px);
        padding: 10px 12px;
        display: grid;
        gap: 10px;
      }
      legend {
        font-weight: 700;
        padding: 0 4px;
      }
    `,
  ];

  @property({ attribute: false }) worksheet?: Worksheet;
  /** Now, from the injected clock, to read a bare "08:15" against. */
  @property({ attribute: false }) now = 0;

  @state() private fields?: FactsFields;
  @state() private errors: Partial<Record<keyof FactsFields, string>> = {};
  @state() private warnings: Partial<Record<keyof FactsFields, string>> = {};
  private loadedFor?: string;

  protected override willUpdate(): void {
    const ws = this.worksheet;
    if (ws && (this.loadedFor !== `${ws.id}:${ws.rev}` || !this.fields)) {
      // Reload the form when another worksheet or a newer version arrives, unless the user is typing.
      if (!this.fields || this.loadedFor?.split(':')[0] !== ws.id || !this.dirty) {
        this.fields = fieldsOf(ws);
        this.errors = {};
      }
      this.loadedFor = `${ws.id}:${ws.rev}`;
    }
  }

  private dirty = false;

  private set(name: keyof FactsFields, value: string | boolean): void {
    if (!this.fields) return;
    this.fields = { ...this.fields, [name]: value };
    this.dirty = true;
  }

  // An arrow function: it is handed to a template as an event listener.
  private readonly submit = (e: Event): void => {
    e.preventDefault();
    const ws = this.worksheet;
    if (!ws || !this.fields) return;
    const r = validateFacts(this.fields, ws.displayOffset, this.now);
    if (!r.ok) {
      this.errors = r.errors;
      this.warnings = {};
      const first = Object.keys(r.errors)[0];
      if (first !== undefined)
        void this.updateComplete.then(() => this.renderRoot.querySelector<HTMLElement>(`[name="${first}"]`)?.focus());
      return;
    }
    this.errors = {};
    this.warnings = r.warnings;
    this.dirty = false;
    this.dispatchEvent(new FactsEvent(r.patch));
  };

  private field(name: keyof FactsFields, label: string, hint?: string, inputmode = 'decimal') {
    const f = this.fields!;
    const err = this.errors[name];
    const warn = this.warnings[name];
    return html`<label>
      ${label}
      <input
        name=${name}
        inputmode=${inputmode}
        .value=${String(f[name])}
        aria-invalid=${err ? 'true' : 'false'}
        aria-describedby="${name}-msg"
        @input=${(e: Event) => this.set(name, (e.target as HTMLInputElement).value)}
      />
      <span id="${name}-msg" class=${err ? 'error' : warn ? 'warning' : 'hint'} role=${err ? 'alert' : nothing}
        >${err ?? warn ?? hint ?? ''}</span
      >
    </label>`;
  }

  override render() {
    const ws = this.worksheet;
    if (!ws || !this.fields) return nothing;
    const f = this.fields;
    const dw = dosingWeight(ws);
    return html`<form @submit=${this.submit} novalidate aria-labelledby="facts-title">
      <h2 id="facts-title">Worksheet facts</h2>
      ${this.field('label', 'Bed or case code', 'No names or record numbers: a bed or case code only.', 'text')}
      <div class="row">
        ${this.field('weightKg', 'Weight (kg)')} ${this.field('heightCm', 'Height (cm)')}
      </div>
      <div class="row">
        <label>
          Sex (for ideal body weight)
          <select name="sex" .value=${f.sex} @change=${(e: Event) => this.set('sex', (e.target as HTMLSelectElement).value)}>
            <option value="" ?selected=${f.sex === ''}>Not given</option>
            <option value="female" ?selected=${f.sex === 'female'}>Female</option>
            <option value="male" ?selected=${f.sex === 'male'}>Male</option>
          </select>
          <span class="error" role=${this.errors.sex ? 'alert' : nothing}>${this.errors.sex ?? ''}</span>
        </label>
        ${this.field('baselineSbp', 'Baseline systolic (mmHg)', 'Last known before this illness.')}
      </div>
      <label class="check">
        <input
          type="checkbox"
          name="useIdealWeight"
          .checked=${f.useIdealWeight}
          @change=${(e: Event) => this.set('useIdealWeight', (e.target as HTMLInputElement).checked)}
        />
        <span
          >Use ideal body weight (Devine) for the 30 mL/kg volume when BMI is over 30, as SEP-1 allows when the clinician
          documents it.
          <span class="hint">Now dosing by: ${dw ? `${dw.kg.toFixed(1)} kg, ${dw.explanation}` : 'no weight given'}.</span>
          <span class="warning">${this.warnings.useIdealWeight ?? ''}</span>
        </span>
      </label>
      <fieldset>
        <legend>Time zero</legend>
        ${this.field('timeZero', 'Time zero', `08:15 today, or a date and time. Worksheet offset ${formatOffset(ws.displayOffset)}.`, 'text')}
        <label>
          Based on
          <select name="basis" .value=${f.basis} @change=${(e: Event) => this.set('basis', (e.target as HTMLSelectElement).value)}>
            ${Object.entries(BASIS_LABEL).map(([v, l]) => html`<option value=${v} ?selected=${f.basis === v}>${l}</option>`)}
          </select>
          <span class="error" role=${this.errors.basis ? 'alert' : nothing}>${this.errors.basis ?? ''}</span>
        </label>
        ${f.basis === 'other' || f.reason ? this.field('reason', 'Why this time', undefined, 'text') : nothing}
        ${this.field('shockTime', 'Septic shock presentation (if any)', 'Starts the 6-hour clocks of the shock-only goals.', 'text')}
      </fieldset>
      <div class="actions">
        <button class="primary" type="submit">Save facts</button>
        <button type="button" @click=${() => this.dispatchEvent(new Event('tm-close', { bubbles: true, composed: true }))}>Close</button>
      </div>
    </form>`;
  }
}

declare global {
  interface HTMLElementTagNameMap {
    'tm-facts': TmFacts;
  }
  interface HTMLElementEventMap {
    'tm-facts': FactsEvent;
  }
}
