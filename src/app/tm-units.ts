/**
 * <tm-units>: the units this user reads the measures in where the trade uses two (lactate,
 * creatinine, bilirubin, hemoglobin, temperature). Values are always stored in canonical units;
 * this only changes what the grid shows and how a bare number typed there is read.
 *
 * @fires tm-units - `UnitsEvent` with the new preferences.
 */
import { LitElement, css, html } from 'lit';
import { customElement, property } from 'lit/decorators.js';
import { DUAL_UNIT_KEYS, displayUnit, displayUnitChoices, type DisplayUnitPrefs } from '../sheet/display-units.js';
import { measure } from '../sheet/measures.js';
import { controls } from './theme.js';

export class UnitsEvent extends Event {
  constructor(readonly prefs: DisplayUnitPrefs) {
    super('tm-units', { bubbles: true, composed: true });
  }
}

@customElement('tm-units')
export class TmUnits extends LitElement {
  static override styles = [
    controls,
    css`
      :host {
        display: block;
        font-family: var(--tm-font, system-ui, sans-serif);
      }
      fieldset {
        border: 1px solid var(--tm-line, #c9cdd4);
        border-radius: var(--tm-radius, 6px);
        padding: 8px 10px;
        display: grid;
        gap: 6px;
      }
      legend {
        font-weight: 700;
      }
      label {
        display: grid;
        grid-template-columns: 1fr auto;
        align-items: center;
        gap: 6px;
        font-size: 0.92rem;
      }
      select {
        min-height: 34px;
      }
    `,
  ];

  @property({ attribute: false }) prefs: DisplayUnitPrefs = {};

  private change(key: (typeof DUAL_UNIT_KEYS)[number], ucum: string): void {
    this.dispatchEvent(new UnitsEvent({ ...this.prefs, [key]: ucum }));
  }

  override render() {
    return html`<fieldset>
      <legend>Units I read</legend>
      ${DUAL_UNIT_KEYS.map((key) => {
        const current = displayUnit(key, this.prefs)?.ucum;
        return html`<label>
          ${measure(key).label}
          <select @change=${(e: Event) => this.change(key, (e.target as HTMLSelectElement).value)}>
            ${displayUnitChoices(key).map((u) => html`<option value=${u.ucum} ?selected=${u.ucum === current}>${u.label}</option>`)}
          </select>
        </label>`;
      })}
    </fieldset>`;
  }
}

declare global {
  interface HTMLElementTagNameMap {
    'tm-units': TmUnits;
  }
  interface HTMLElementEventMap {
    'tm-units': UnitsEvent;
  }
}
