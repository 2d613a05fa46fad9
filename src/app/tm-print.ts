/**
 * <tm-print>: the printout of one worksheet — facts and time zero, every goal with its status
 * word and time, the trends, the worksheet's values (charted and derived) in column groups that
 * fit a portrait page, and the note's timeline. Hidden on screen; shown by the browser's print.
 * Black and white: status is a word and a symbol, flagged values carry a letter.
 */
import { LitElement, css, html, nothing } from 'lit';
import { customElement, property } from 'lit/decorators.js';
import { worksheetNote } from '../export/note.js';
import { orderGoals, goalTimeText } from '../goals/goal-order.js';
import type { GoalStatus } from '../goals/status.js';
import { dosingWeight } from '../sheet/body.js';
import { derivedDef, type DerivedRow } from '../sheet/derived.js';
import { printColumns } from './print-model.js';
import { MEASURES } from '../sheet/measures.js';
import type { Worksheet } from '../sheet/model.js';
import { formatCell } from '../sheet/parse.js';
import { formatClock, formatDateTime, formatDuration, formatOffset } from '../sheet/time.js';
import { STATUS_SYMBOL, STATUS_WORD } from './theme.js';
import { CAUTION } from './caution.js';
import './tm-trends.js';

@customElement('tm-print')
export class TmPrint extends LitElement {
  static override styles = css`
    :host {
      display: block;
      font-family: var(--tm-font, system-ui, sans-serif);
      color: #000;
      font-size: 10.5pt;
    }
    h1 {
      font-size: 15pt;
      margin: 0 0 2pt;
    }
    h2 {
      font-size: 11.5pt;
      margin: 10pt 0 4pt;
      border-bottom: 1pt solid #000;
    }
    p {
      margin: 2pt 0;
    }
    .caution {
      border: 1pt solid #000;
      padding: 3pt 6pt;
      font-size: 9pt;
    }
    table {
      border-collapse: collapse;
      width: 100%;
      margin-bottom: 6pt;
      page-break-inside: auto;
    }
    th,
    td {
      border: 0.5pt solid #555;
      padding: 1.5pt 3pt;
      text-align: right;
      font-variant-numeric: tabular-nums;
    }
    th {
      font-size: 8.5pt;
      vertical-align: bottom;
    }
    th.time,
    td.time,
    .goals td {
      text-align: left;
    }
    td.derived,
    th.derived {
      font-style: italic;
    }
    tr {
      page-break-inside: avoid;
    }
    pre {
      font-family: var(--tm-mono, monospace);
      font-size: 8.5pt;
      white-space: pre-wrap;
      margin: 0;
    }
    .sym {
      font-weight: 700;
      width: 1.2em;
    }
  `;

  @property({ attribute: false }) worksheet?: Worksheet;
  @property({ attribute: false }) derived: readonly DerivedRow[] = [];
  @property({ attribute: false }) goals: readonly GoalStatus[] = [];
  @property({ attribute: false }) now = 0;

  private timeline(ws: Worksheet): string {
    // The note's timeline section, as the note itself prints it.
    const note = worksheetNote(ws, { atMs: this.now, goals: this.goals });
    const start = note.indexOf('\nTIMELINE\n');
    if (start < 0) return '';
    const end = note.indexOf('\n\n', start + 1);
    return note.slice(start + 1, end < 0 ? undefined : end).trim();
  }

  override render() {
    const ws = this.worksheet;
    if (!ws) return nothing;
    const off = ws.displayOffset;
    const tz = ws.timeZero;
    const dw = dosingWeight(ws);
    const byRow = new Map(this.derived.map((d) => [d.rowId, d.values]));
    const rows = ws.rows.filter((r) => Date.parse(r.time) <= this.now);
    return html`
      <h1>${ws.label}</h1>
      <p class="caution">${CAUTION}</p>
      <p>
        Printed ${formatDateTime(new Date(this.now).toISOString(), off)} (UTC${formatOffset(off)}).
        ${
          tz
            ? html`Time zero ${formatDateTime(tz.time, off)} (${tz.basis}${tz.reason ? `: ${tz.reason}` : ''}),
              ${formatDuration(this.now - Date.parse(tz.time))} before printing.`
            : 'Time zero not set.'
        }
      </p>
      <p>
        Weight ${ws.weightKg ?? '—'} kg${ws.heightCm ? `, height ${ws.heightCm} cm` : ''}; dosing weight
        ${dw ? `${dw.kg.toFixed(1)} kg (${dw.explanation})` : '—'}.
      </p>
      <h2>Goals</h2>
      <table class="goals">
        <tbody>
          ${orderGoals(this.goals).map(
            (g) => html`<tr>
              <td class="sym">${STATUS_SYMBOL[g.status]}</td>
              <td>${STATUS_WORD[g.status]}</td>
              <td>${g.label} <small>(${g.setTitle})</small></td>
              <td>${goalTimeText(g, this.now, off)}</td>
            </tr>`,
          )}
        </tbody>
      </table>
      <h2>Trends</h2>
      <tm-trends .worksheet=${ws} .derived=${this.derived} .goals=${this.goals} .now=${this.now}></tm-trends>
      <h2>Worksheet values</h2>
      ${printColumns(ws, this.derived).map(
        (group) => html`<table>
          <thead>
            <tr>
              <th class="time">Time</th>
              ${group.map((c) => html`<th class=${c.derived ? 'derived' : ''}>${c.header}<br />${c.unit}</th>`)}
            </tr>
          </thead>
          <tbody>
            ${rows.map(
              (r) => html`<tr>
                <td class="time">${formatClock(r.time, off)}</td>
                ${group.map((c) => {
                  if (c.derived) {
                    const v = byRow.get(r.id)?.[c.key];
                    const d = derivedDef(c.key);
                    return html`<td class="derived">${v === undefined ? '' : Number(v.toFixed(d?.decimals ?? 2))}</td>`;
                  }
                  const cell = r.cells[c.key];
                  const flag = cell?.flag === 'low' ? ' L' : cell?.flag === 'high' ? ' H' : '';
                  return html`<td>${MEASURES.has(c.key) ? formatCell(c.key, cell) : ''}${flag}</td>`;
                })}
              </tr>`,
            )}
          </tbody>
        </table>`,
      )}
      <p><small>Italic: calculated by Tidemark. L/H: kept but flagged low/high.</small></p>
      <h2>Timeline</h2>
      <pre>${this.timeline(ws)}</pre>
    `;
  }
}

declare global {
  interface HTMLElementTagNameMap {
    'tm-print': TmPrint;
  }
}
