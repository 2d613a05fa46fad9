/**
 * <tm-trends>: small multiples beside the worksheet. One compact panel per measure (MAP, lactate,
 * ScvO₂, urine output per kg per hour, norepinephrine equivalent) on a shared time axis in hours
 * since time zero; the target band of each goal set in force shaded and labelled in words;
 * out-of-range values drawn as triangles (▲ above, ▼ below) and in-range values as dots, so the
 * status never rests on colour; time zero, now and each deadline as vertical lines; crystalloid
 * (◆), blood (◇), antibiotics (A) and cultures (C) in an event strip where they happened.
 *
 * Plain SVG through Lit `svg` templates: no dependency, no inline styles (works under a strict
 * `style-src 'self'`), everything styled by classes in `static styles`. All figures come from the
 * pure model in trend-model.ts.
 *
 * Properties: `worksheet`, `derived` (rows of `deriveAll`), `goals` (the engine's statuses at
 * `now`), `now` (ms, from the injected clock), `selectedRowId` (the grid's current row, marked on
 * every panel).
 *
 * @fires tm-point - `CustomEvent<TrendPointDetail>` (bubbles, composed): a value or event was
 *   pointed at, focused or activated (`rowId`), or pointing/focus left the trends (`rowId` null).
 */
import { LitElement, css, html, nothing, svg, type PropertyValues, type TemplateResult } from 'lit';
import { customElement, property, state } from 'lit/decorators.js';
import type { GoalStatus } from '../goals/status.js';
import type { DerivedRow } from '../sheet/derived.js';
import type { Worksheet } from '../sheet/model.js';
import { formatClock } from '../sheet/time.js';
import { STATUS_SYMBOL } from './theme.js';
import {
  assignLanes,
  buildTrends,
  minutesLabel,
  pointText,
  sinceText,
  valueText,
  VERDICT_SYMBOL,
  VERDICT_WORD,
  type TrendBand,
  type TrendMarker,
  type TrendModel,
  type TrendPoint,
  type TrendSeries,
} from './trend-model.js';

export interface TrendPointDetail {
  /** The row pointed at, or null when pointing or focus left the trends. */
  rowId: string | null;
  /** The measure (`map`, `lactate`...) or event kind (`fluid`, `antibiotic`...) pointed at. */
  key: string | null;
  /** How: hovering a pointer, keyboard focus, or a click / Enter. */
  via: 'pointer' | 'focus' | 'activate' | 'leave';
}

/** Caution shown under the trends (design.md, Conventions for the screens). */
export const TRENDS_CAUTION =
  'Decision support only: targets follow the published goal sets in force; check them against local protocols and your own clinical judgment.';

// Geometry, in viewBox units (the SVGs scale to the width of the element).
const W = 760;
const LEFT = 60;
/** Right gutter: band labels sit here, clear of the data. */
const RIGHT = 112;
const PANEL_H = 118;
const PAD_T = 10;
const PAD_B = 8;
const LANE_DUE = 15;
const LANE_EV = 19;
const EVENT_LANES = [
  { kinds: ['fluid', 'blood'], label: 'fluids' },
  { kinds: ['antibiotic'], label: 'antibiotic' },
  { kinds: ['cultures'], label: 'cultures' },
] as const;
const DUE_LANES = 2;
const EVENTS_H = 6 + DUE_LANES * LANE_DUE + EVENT_LANES.length * LANE_EV + 4;
const AXIS_H = 36;

@customElement('tm-trends')
export class TmTrends extends LitElement {
  static override styles = css`
    :host {
      display: block;
      font-family: var(--tm-font, system-ui, sans-serif);
      color: var(--tm-ink, #1c2430);
      --tr-band: var(--tm-met-bg, #e4f2e8);
      --tr-band-edge: var(--tm-met, #1f6b3a);
      --tr-in: var(--tm-met, #1f6b3a);
      --tr-out: var(--tm-missed, #a3161d);
      --tr-line: var(--tm-accent, #0e5a70);
      --tr-due: var(--tm-pending, #7a4b00);
      --tr-grid: #e3e6ea;
      --tr-soft: var(--tm-ink-soft, #4a5566);
      --tr-sel: var(--tm-accent, #0e5a70);
    }
    section {
      background: var(--tm-surface, #fff);
      border: 1px solid var(--tm-line, #c9cdd4);
      border-radius: var(--tm-radius, 6px);
      padding: 10px 12px 8px;
    }
    .head {
      display: flex;
      flex-wrap: wrap;
      align-items: baseline;
      gap: 4px 16px;
    }
    h2 {
      font-size: 1.1rem;
      margin: 0;
    }
    .legend {
      margin: 0;
      font-size: 0.85rem;
      color: var(--tr-soft);
      display: flex;
      flex-wrap: wrap;
      gap: 2px 12px;
    }
    .legend .in {
      color: var(--tr-in);
    }
    .legend .out {
      color: var(--tr-out);
    }
    .legend .due {
      color: var(--tr-due);
    }
    .later {
      font-size: 0.85rem;
      color: var(--tr-due);
      margin: 2px 0 0;
    }
    .sel-note {
      font-size: 0.85rem;
      color: var(--tr-soft);
      margin: 2px 0 0;
    }
    svg {
      display: block;
      width: 100%;
      height: auto;
      overflow: visible;
    }
    figure {
      margin: 6px 0 0;
      break-inside: avoid;
    }
    .panel-head {
      display: flex;
      flex-wrap: wrap;
      align-items: baseline;
      gap: 2px 12px;
    }
    h3 {
      font-size: 1rem;
      margin: 0;
    }
    h3 .unit {
      font-weight: 400;
      color: var(--tr-soft);
      font-size: 0.9rem;
    }
    .latest {
      font-variant-numeric: tabular-nums;
      font-weight: 700;
    }
    .latest.v-above,
    .latest.v-below {
      color: var(--tr-out);
    }
    .latest.v-in {
      color: var(--tr-in);
    }
    .targets {
      font-size: 0.85rem;
      color: var(--tr-soft);
    }
    figcaption {
      font-size: 0.82rem;
      color: var(--tr-soft);
      margin: 0 0 2px;
    }
    details {
      font-size: 0.85rem;
      margin: 0 0 4px;
    }
    summary {
      cursor: pointer;
      min-height: 28px;
      display: flex;
      align-items: center;
      color: var(--tr-soft);
    }
    summary:focus-visible {
      outline: 3px solid var(--tm-focus, #b35c00);
      outline-offset: 2px;
    }
    table {
      border-collapse: collapse;
      margin: 2px 0 6px;
    }
    th,
    td {
      text-align: left;
      padding: 2px 10px 2px 0;
      border-bottom: 1px solid var(--tr-grid);
      font-variant-numeric: tabular-nums;
    }
    tr.sel td {
      font-weight: 700;
    }
    .caution {
      font-size: 0.8rem;
      color: var(--tr-soft);
      margin: 6px 0 0;
    }
    .empty {
      color: var(--tr-soft);
      margin: 8px 0;
    }

    /* --- SVG --- */
    .plot-bg {
      fill: var(--tm-surface, #fff);
      stroke: var(--tm-line, #c9cdd4);
    }
    .grid {
      stroke: var(--tr-grid);
      stroke-width: 1;
    }
    .tick {
      font-size: 11px;
      fill: var(--tr-soft);
      font-variant-numeric: tabular-nums;
    }
    .tick.clock {
      font-size: 10px;
    }
    .axis-title {
      font-size: 11px;
      fill: var(--tr-soft);
    }
    .band {
      fill: var(--tr-band);
      fill-opacity: 0.75;
    }
    .band-edge {
      stroke: var(--tr-band-edge);
      stroke-width: 1;
    }
    .drop-line {
      stroke: var(--tr-band-edge);
      stroke-width: 1.5;
      stroke-dasharray: 6 3;
    }
    .band-label {
      font-size: 11px;
      font-weight: 600;
      fill: var(--tr-band-edge);
      paint-order: stroke;
      stroke: var(--tm-surface, #fff);
      stroke-width: 3px;
      stroke-linejoin: round;
    }
    .band-sets {
      font-size: 10px;
      fill: var(--tr-soft);
    }
    .t0 {
      stroke: var(--tm-ink, #1c2430);
      stroke-width: 1.5;
    }
    .now {
      stroke: var(--tr-soft);
      stroke-width: 1.2;
      stroke-dasharray: 2 3;
    }
    .due {
      stroke: var(--tr-due);
      stroke-width: 1.2;
      stroke-dasharray: 5 4;
    }
    .due-label {
      font-size: 11px;
      font-weight: 600;
      fill: var(--tr-due);
    }
    .t0-label,
    .now-label {
      font-size: 11px;
      font-weight: 600;
      fill: var(--tm-ink, #1c2430);
    }
    .lane-label {
      font-size: 11px;
      fill: var(--tr-soft);
    }
    .lane-line {
      stroke: var(--tr-grid);
    }
    .sel-line {
      stroke: var(--tr-sel);
      stroke-width: 2;
    }
    .sel-band {
      fill: var(--tr-sel);
      fill-opacity: 0.14;
    }
    .hover-line {
      stroke: var(--tr-line);
      stroke-width: 1;
      stroke-opacity: 0.55;
    }
    .series {
      fill: none;
      stroke: var(--tr-line);
      stroke-width: 1.8;
      stroke-linejoin: round;
    }
    .interval {
      stroke: var(--tr-line);
      stroke-width: 3;
      stroke-opacity: 0.35;
    }
    .pt {
      cursor: pointer;
      outline: none;
    }
    .pt .hit {
      fill: transparent;
    }
    .pt .mark {
      stroke: var(--tm-surface, #fff);
      stroke-width: 1.2;
    }
    .pt.v-in .mark {
      fill: var(--tr-in);
    }
    .pt.v-above .mark,
    .pt.v-below .mark {
      fill: var(--tr-out);
    }
    .pt.v-none .mark {
      fill: var(--tm-surface, #fff);
      stroke: var(--tr-line);
      stroke-width: 1.8;
    }
    .pt .ring {
      fill: none;
      stroke: transparent;
      stroke-width: 2.5;
    }
    .pt.sel .ring {
      stroke: var(--tr-sel);
    }
    .pt:focus-visible .ring,
    .pt:hover .ring {
      stroke: var(--tm-focus, #b35c00);
      stroke-dasharray: 3 2;
    }
    .pt.sel:focus-visible .ring {
      stroke-dasharray: none;
    }
    .value-label {
      pointer-events: none;
      font-size: 11px;
      fill: var(--tm-ink, #1c2430);
      font-variant-numeric: tabular-nums;
      paint-order: stroke;
      stroke: var(--tm-surface, #fff);
      stroke-width: 3px;
      stroke-linejoin: round;
    }
    .value-label.v-above,
    .value-label.v-below {
      font-weight: 700;
    }
    .no-values {
      font-size: 12px;
      fill: var(--tr-soft);
    }
    .ev {
      cursor: pointer;
    }
    .ev .sym {
      font-size: 13px;
      font-weight: 700;
      fill: var(--tr-line);
    }
    .ev .ev-text {
      font-size: 11px;
      fill: var(--tm-ink, #1c2430);
    }
    .ev .hit {
      fill: transparent;
    }
    .ev.sel .sym {
      fill: var(--tr-sel);
    }

    @media (forced-colors: active) {
      .pt .mark,
      .sym {
        fill: CanvasText;
      }
      .band {
        fill: Canvas;
      }
      .band-edge,
      .drop-line,
      .series,
      .due,
      .t0,
      .sel-line {
        stroke: CanvasText;
      }
    }

    /* Print: black and white, no controls; shapes and words carry every status. */
    @media print {
      :host {
        --tr-band: #e8e8e8;
        --tr-band-edge: #000;
        --tr-in: #000;
        --tr-out: #000;
        --tr-line: #000;
        --tr-due: #000;
        --tr-grid: #d0d0d0;
        --tr-soft: #333;
        --tr-sel: #000;
        color: #000;
      }
      section {
        border: none;
        padding: 0;
      }
      details,
      .sel-note,
      .hover-line,
      .sel-band,
      .sel-line,
      .pt .ring {
        display: none;
      }
      .pt.v-above .mark,
      .pt.v-below .mark {
        fill: #fff;
        stroke: #000;
        stroke-width: 1.6;
      }
    }
  `;

  @property({ attribute: false }) worksheet: Worksheet | undefined;
  /** Derived rows (`deriveAll(ws).rows`). */
  @property({ attribute: false }) derived: readonly DerivedRow[] = [];
  /** Goal statuses at `now` (`evaluate(ws, worksheetSetIds(ws), now)`). */
  @property({ attribute: false }) goals: readonly GoalStatus[] = [];
  /** Now, ms since the epoch, from the injected clock. */
  @property({ attribute: false }) now = 0;
  /** The row selected in the grid: its time is marked on every panel. */
  @property({ attribute: false }) selectedRowId: string | null = null;

  /** The row pointed at or focused here (a guide line across the panels). */
  @state() private pointedRowId: string | null = null;
  /** Per panel, the point holding the roving tab stop. */
  @state() private active: Record<string, number> = {};

  private model: TrendModel | undefined;

  protected override willUpdate(changed: PropertyValues<this>): void {
    if (changed.has('worksheet') || changed.has('derived') || changed.has('goals') || changed.has('now')) {
      this.model = this.worksheet ? buildTrends(this.worksheet, this.derived, this.goals, this.now) : undefined;
    }
    if (changed.has('selectedRowId') && this.selectedRowId && this.model) {
      const next = { ...this.active };
      for (const s of this.model.series) {
        const i = s.points.findIndex((p) => p.rowId === this.selectedRowId);
        if (i >= 0) next[s.key] = i;
      }
      this.active = next;
    }
  }

  /** The model last drawn (for tests and for the note preview). */
  get trends(): TrendModel | undefined {
    return this.model;
  }

  private emit(detail: TrendPointDetail): void {
    this.dispatchEvent(new CustomEvent<TrendPointDetail>('tm-point', { detail, bubbles: true, composed: true }));
  }

  private point(rowId: string, key: string, via: TrendPointDetail['via']): void {
    this.pointedRowId = rowId;
    this.emit({ rowId, key, via });
  }

  private leave(e?: FocusEvent): void {
    const to = e?.relatedTarget as Element | null | undefined;
    if (to && this.renderRoot.contains(to) && to.closest?.('.pt, .ev')) return;
    if (this.pointedRowId === null) return;
    this.pointedRowId = null;
    this.emit({ rowId: null, key: null, via: 'leave' });
  }

  private onPointKey(e: KeyboardEvent, s: TrendSeries, i: number): void {
    let next = i;
    if (e.key === 'ArrowRight' || e.key === 'ArrowDown') next = Math.min(s.points.length - 1, i + 1);
    else if (e.key === 'ArrowLeft' || e.key === 'ArrowUp') next = Math.max(0, i - 1);
    else if (e.key === 'Home') next = 0;
    else if (e.key === 'End') next = s.points.length - 1;
    else if (e.key === 'Enter' || e.key === ' ') {
      e.preventDefault();
      this.point(s.points[i]!.rowId, s.key, 'activate');
      return;
    } else return;
    e.preventDefault();
    this.active = { ...this.active, [s.key]: next };
    void this.updateComplete.then(() => {
      this.renderRoot.querySelector<SVGElement>(`figure[data-key="${s.key}"] .pt[data-index="${next}"]`)?.focus();
    });
  }

  // --- Scales -------------------------------------------------------------------------------

  private x(m: number): number {
    const md = this.model!;
    const span = md.xMax - md.xMin || 1;
    return LEFT + ((m - md.xMin) / span) * (W - LEFT - RIGHT);
  }

  private clock(ms: number): string {
    return formatClock(new Date(ms).toISOString(), this.model!.offset);
  }

  /** Vertical lines shared by every SVG: time zero, deadlines, now, the selected and pointed rows. */
  private verticals(top: number, bottom: number): TemplateResult {
    const md = this.model!;
    const lines = md.markers.filter(
      (m) => (m.kind === 'time-zero' || m.kind === 'now' || m.kind === 'deadline') && m.minutes >= md.xMin && m.minutes <= md.xMax,
    );
    const sel = this.selectedRowId !== null ? md.rowMinutes.get(this.selectedRowId) : undefined;
    const hov = this.pointedRowId !== null && this.pointedRowId !== this.selectedRowId ? md.rowMinutes.get(this.pointedRowId) : undefined;
    return svg`${lines.map((m) => {
      const x = this.x(m.minutes);
      const cls = m.kind === 'time-zero' ? 't0' : m.kind === 'now' ? 'now' : 'due';
      return svg`<line class=${cls} x1=${x} x2=${x} y1=${top} y2=${bottom}><title>${m.text}</title></line>`;
    })}
    ${hov !== undefined ? svg`<line class="hover-line" x1=${this.x(hov)} x2=${this.x(hov)} y1=${top} y2=${bottom}></line>` : nothing}
    ${
      sel !== undefined
        ? svg`<rect class="sel-band" x=${this.x(sel) - 7} y=${top} width="14" height=${bottom - top}></rect>
          <line class="sel-line" x1=${this.x(sel)} x2=${this.x(sel)} y1=${top} y2=${bottom}></line>`
        : nothing
    }`;
  }

  private xGrid(top: number, bottom: number): TemplateResult {
    return svg`${this.model!.xTicks.map((t) => svg`<line class="grid" x1=${this.x(t)} x2=${this.x(t)} y1=${top} y2=${bottom}></line>`)}`;
  }

  // --- Event strip --------------------------------------------------------------------------

  private deadlineLabel(m: TrendMarker): string {
    const counts = new Map<string, number>();
    for (const g of m.goals) counts.set(g.status, (counts.get(g.status) ?? 0) + 1);
    const order = ['missed', 'pending', 'met', 'no-data', 'not-applicable'] as const;
    const tally = order
      .filter((s) => counts.has(s))
      .map((s) => `${STATUS_SYMBOL[s]}${counts.get(s) ?? 0}`)
      .join(' ');
    return `${minutesLabel(m.minutes)} ${tally}`;
  }

  private renderEvents(): TemplateResult {
    const md = this.model!;
    const now = md.markers.find((m) => m.kind === 'now')!;
    const dues = md.markers.filter((m) => m.kind === 'deadline' && m.minutes >= md.xMin && m.minutes <= md.xMax);
    const tops = [...dues, now];
    const topLanes = assignLanes(
      tops.map((m) => this.x(m.minutes)),
      72,
      DUE_LANES,
    );
    const evTop = 6 + DUE_LANES * LANE_DUE;
    const t0 = md.markers.find((m) => m.kind === 'time-zero');
    const lanes = EVENT_LANES.map((lane, li) => {
      const y = evTop + li * LANE_EV + LANE_EV / 2;
      const items = md.markers.filter((m) => (lane.kinds as readonly string[]).includes(m.kind));
      return svg`<line class="lane-line" x1=${LEFT} x2=${W - RIGHT} y1=${y + LANE_EV / 2} y2=${y + LANE_EV / 2}></line>
        <text class="lane-label" x=${LEFT - 6} y=${y + 4} text-anchor="end">${lane.label}</text>
        ${items.map((m, k) => {
          const x = this.x(m.minutes);
          const text = m.kind === 'cultures' ? '' : m.short;
          const width = text.length * 6.4;
          const nextX = k + 1 < items.length ? this.x(items[k + 1]!.minutes) : W + 200;
          const fits = x + 9 + width + 4 <= Math.min(nextX - 8, W + 40);
          const showText = text !== '' && fits;
          const sel = m.rowId !== null && m.rowId === this.selectedRowId;
          return svg`<g class="ev ${sel ? 'sel' : ''}" data-kind=${m.kind} data-row=${m.rowId ?? ''} data-minutes=${m.minutes}
              @pointerenter=${() => m.rowId && this.point(m.rowId, m.kind, 'pointer')}
              @pointerleave=${() => this.leave()}
              @click=${() => m.rowId && this.point(m.rowId, m.kind, 'activate')}>
            <title>${m.text}</title>
            <rect class="hit" x=${x - 8} y=${y - 9} width=${showText ? width + 20 : 16} height="18"></rect>
            <text class="sym" x=${x} y=${y + 4.5} text-anchor="middle">${m.symbol}</text>
            ${showText ? svg`<text class="ev-text" x=${x + 8} y=${y + 4}>${text}</text>` : nothing}
          </g>`;
        })}`;
    });
    const label = `Events and deadlines: ${md.markers
      .filter((m) => m.kind !== 'now')
      .map((m) => m.text)
      .join('. ')}.`;
    return html`<figure class="events">
      <svg viewBox="0 0 ${W} ${EVENTS_H}" role="img" aria-label=${label}>
        ${this.xGrid(evTop, EVENTS_H - 4)} ${this.verticals(4, EVENTS_H)}
        <text class="lane-label" x=${LEFT - 6} y=${6 + LANE_DUE - 4} text-anchor="end">deadline</text>
        ${tops.map((m, i) => {
          const x = this.x(m.minutes);
          const y = 6 + topLanes[i]! * LANE_DUE + LANE_DUE - 4;
          return m.kind === 'now'
            ? svg`<text class="now-label" x=${x + 3} y=${y}>now ${this.clock(m.timeMs)}</text>`
            : svg`<text class="due-label" data-minutes=${m.minutes} x=${x + 3} y=${y}><title>${m.text}</title>${this.deadlineLabel(m)}</text>`;
        })}
        ${t0 ? svg`<text class="t0-label" x=${this.x(0) - 3} y=${6 + LANE_DUE - 4} text-anchor="end">T0</text>` : nothing}
        ${lanes}
      </svg>
    </figure>`;
  }

  // --- Panels -------------------------------------------------------------------------------

  private y(s: TrendSeries, v: number): number {
    const span = s.yMax - s.yMin || 1;
    const clamped = Math.max(s.yMin, Math.min(s.yMax, v));
    return PAD_T + (1 - (clamped - s.yMin) / span) * (PANEL_H - PAD_T - PAD_B);
  }

  private renderBands(s: TrendSeries): TemplateResult {
    const md = this.model!;
    const xr = this.x(md.xMax);
    const used: number[] = [];
    // Two lines per label (target, sets) next to the band edge, kept apart and inside the panel.
    const labelY = (edge: number): number => {
      let v = Math.max(PAD_T + 9, Math.min(PANEL_H - PAD_B - 12, edge + 4));
      while (used.some((u) => Math.abs(u - v) < 23)) v += 23;
      used.push(v);
      return v;
    };
    const geo = s.bands.map((b: TrendBand) => {
      const xl = this.x(Math.max(b.fromMinutes, md.xMin));
      const yTop = this.y(s, b.kind === 'drop' ? b.max! : (b.max ?? s.yMax));
      const yBottom = this.y(s, b.kind === 'drop' ? b.max! : (b.min ?? s.yMin));
      return { b, xl, yTop, yBottom };
    });
    // Shading first, then edges, then the words, so no band hides another's label.
    return svg`${geo.map(({ b, xl, yTop, yBottom }) =>
      b.kind === 'range'
        ? svg`<rect class="band" data-goals=${b.goalIds.join(' ')} data-min=${b.min ?? ''} data-max=${b.max ?? ''}
            x=${xl} y=${yTop} width=${Math.max(0, xr - xl)} height=${Math.max(0, yBottom - yTop)}><title>${b.label}</title></rect>`
        : nothing,
    )}
    ${geo.map(({ b, xl, yTop, yBottom }) =>
      b.kind === 'drop'
        ? svg`<line class="drop-line" data-goals=${b.goalIds.join(' ')} data-max=${b.max!} x1=${xl} x2=${xr} y1=${yTop} y2=${yTop}><title>${b.label}</title></line>`
        : svg`${b.min !== null ? svg`<line class="band-edge" x1=${xl} x2=${xr} y1=${yBottom} y2=${yBottom}></line>` : nothing}
            ${b.max !== null ? svg`<line class="band-edge" x1=${xl} x2=${xr} y1=${yTop} y2=${yTop}></line>` : nothing}`,
    )}
    ${geo.map(({ b, yTop, yBottom }) => {
      const ly = labelY(b.kind === 'range' && b.max === null ? yBottom : yTop);
      const lx = W - RIGHT + 6;
      return svg`<text class="band-label" x=${lx} y=${ly}>${b.shortText}</text>
        <text class="band-sets" x=${lx} y=${ly + 11}>${b.kind === 'drop' && b.dropPct !== null ? `−${b.dropPct}% · ` : ''}${b.sets.join(', ')}</text>`;
    })}`;
  }

  private mark(p: TrendPoint): TemplateResult {
    if (p.verdict === 'above') return svg`<path class="mark" d="M0,-7 L6.5,5 L-6.5,5 Z"></path>`;
    if (p.verdict === 'below') return svg`<path class="mark" d="M0,7 L6.5,-5 L-6.5,-5 Z"></path>`;
    return svg`<circle class="mark" r=${p.verdict === 'in' ? 5 : 4.5}></circle>`;
  }

  private renderPoints(s: TrendSeries): TemplateResult {
    const md = this.model!;
    const activeIndex = Math.min(this.active[s.key] ?? s.points.length - 1, s.points.length - 1);
    const line = s.points.map((p) => `${this.x(p.minutes).toFixed(1)},${this.y(s, p.value).toFixed(1)}`).join(' ');
    let lastLabelX = -Infinity;
    const labels = s.points.map((p, i) => {
      const x = this.x(p.minutes);
      const show = x - lastLabelX >= 30 || i === s.points.length - 1;
      if (show) lastLabelX = x;
      return show;
    });
    // The last point's label wins over a too-close previous one.
    for (let i = s.points.length - 2; i >= 0; i--) {
      if (labels[i] && this.x(s.points[s.points.length - 1]!.minutes) - this.x(s.points[i]!.minutes) < 30) labels[i] = false;
      else break;
    }
    return svg`
      ${s.points
        .filter((p) => p.fromMinutes !== null)
        .map((p) => {
          const y = this.y(s, p.value);
          return svg`<line class="interval" x1=${this.x(p.fromMinutes!)} x2=${this.x(p.minutes)} y1=${y} y2=${y}></line>`;
        })}
      ${s.points.length > 1 ? svg`<polyline class="series" points=${line}></polyline>` : nothing}
      ${s.points.map((p, i) => {
        const x = this.x(p.minutes);
        const y = this.y(s, p.value);
        const sel = p.rowId === this.selectedRowId;
        return svg`<g class="pt v-${p.verdict} ${sel ? 'sel' : ''}" data-row=${p.rowId} data-index=${i} data-value=${p.value} data-minutes=${p.minutes}
            transform="translate(${x.toFixed(1)} ${y.toFixed(1)})"
            role="button" tabindex=${i === activeIndex ? 0 : -1}
            aria-label=${pointText(s, p, md.hasTimeZero, md.offset)}
            @pointerenter=${() => this.point(p.rowId, s.key, 'pointer')}
            @pointerleave=${() => this.leave()}
            @focus=${() => {
              this.active = { ...this.active, [s.key]: i };
              this.point(p.rowId, s.key, 'focus');
            }}
            @blur=${(e: FocusEvent) => this.leave(e)}
            @click=${() => this.point(p.rowId, s.key, 'activate')}
            @keydown=${(e: KeyboardEvent) => this.onPointKey(e, s, i)}>
          <title>${pointText(s, p, md.hasTimeZero, md.offset)}</title>
          <circle class="hit" r="13"></circle>
          <circle class="ring" r="10"></circle>
          ${this.mark(p)}
        </g>`;
      })}
      <g class="value-labels" aria-hidden="true">
        ${s.points.map((p, i) => {
          if (!labels[i]) return nothing;
          const y = this.y(s, p.value);
          const above = y - 10 > PAD_T + 2;
          return svg`<text class="value-label v-${p.verdict}" x=${this.x(p.minutes).toFixed(1)} y=${(above ? y - 10 : y + 19).toFixed(1)} text-anchor="middle">${valueText(s.key, p.value)}</text>`;
        })}
      </g>`;
  }

  private renderPanel(s: TrendSeries): TemplateResult {
    const md = this.model!;
    const top = PAD_T;
    const bottom = PANEL_H - PAD_B;
    const last = s.points[s.points.length - 1];
    const u = s.unit ? ` ${s.unit}` : '';
    const captionId = `cap-${s.key}`;
    return html`<figure data-key=${s.key} aria-labelledby="h-${s.key}" aria-describedby=${captionId}>
      <div class="panel-head">
        <h3 id="h-${s.key}">${s.title} <span class="unit">${s.unit}</span></h3>
        ${
          last
            ? html`<span class="latest v-${last.verdict}"
              >latest ${valueText(s.key, last.value)}${u} <span aria-hidden="true">${VERDICT_SYMBOL[last.verdict]}</span> ${VERDICT_WORD[last.verdict]}
              <span class="targets">at ${this.clock(last.timeMs)}</span></span
            >`
            : nothing
        }
        <span class="targets">${s.bands.length ? s.bands.map((b) => b.label).join(' · ') : s.noTarget}</span>
      </div>
      <svg viewBox="0 0 ${W} ${PANEL_H}" role="group" aria-label="${s.title} values; arrow keys move between them">
        <rect class="plot-bg" x=${LEFT} y=${top} width=${W - LEFT - RIGHT} height=${bottom - top}></rect>
        ${this.renderBands(s)}
        ${s.yTicks.map((t) => {
          const y = this.y(s, t);
          return svg`<line class="grid" x1=${LEFT} x2=${W - RIGHT} y1=${y} y2=${y}></line>
            <text class="tick" x=${LEFT - 6} y=${y + 4} text-anchor="end">${String(Number(t.toPrecision(6)))}</text>`;
        })}
        ${this.xGrid(top, bottom)} ${this.verticals(top, bottom)}
        ${
          s.points.length === 0
            ? svg`<text class="no-values" x=${(LEFT + W - RIGHT) / 2} y=${(top + bottom) / 2 + 4} text-anchor="middle">No values charted</text>`
            : this.renderPoints(s)
        }
      </svg>
      <figcaption id=${captionId}>${s.summary}</figcaption>
      ${
        s.points.length
          ? html`<details>
            <summary>${s.title} values as a table</summary>
            <table>
              <thead>
                <tr><th scope="col">Time</th><th scope="col">${md.hasTimeZero ? 'Since time zero' : 'Since the first row'}</th><th scope="col">${s.title}${u ? ` (${s.unit})` : ''}</th><th scope="col">Against target</th></tr>
              </thead>
              <tbody>
                ${s.points.map(
                  (p) => html`<tr data-row=${p.rowId} class=${p.rowId === this.selectedRowId ? 'sel' : ''}>
                    <td>${this.clock(p.timeMs)}</td>
                    <td>${sinceText(p.minutes, md.hasTimeZero)}</td>
                    <td>${valueText(s.key, p.value)}</td>
                    <td>${VERDICT_SYMBOL[p.verdict]} ${VERDICT_WORD[p.verdict]}${p.failed.length ? `: ${p.failed.join('; ')}` : ''}</td>
                  </tr>`,
                )}
              </tbody>
            </table>
          </details>`
          : nothing
      }
    </figure>`;
  }

  private renderAxis(): TemplateResult {
    const md = this.model!;
    const title = md.hasTimeZero
      ? 'time since time zero (top) and clock time'
      : 'time since the first row (time zero not set) and clock time';
    return html`<svg class="axis" viewBox="0 0 ${W} ${AXIS_H}" aria-hidden="true">
      ${md.xTicks.map((t) => {
        const x = this.x(t);
        return svg`<line class="grid" x1=${x} x2=${x} y1="0" y2="4"></line>
          <text class="tick" x=${x} y="15" text-anchor="middle">${minutesLabel(t)}</text>
          <text class="tick clock" x=${x} y="27" text-anchor="middle">${this.clock(md.originMs + t * 60_000)}</text>`;
      })}
      <text class="axis-title" x=${LEFT - 6} y="15" text-anchor="end">${md.hasTimeZero ? 'from T0' : 'from row 1'}</text>
      <text class="axis-title" x=${LEFT - 6} y="27" text-anchor="end">clock</text>
      <title>${title}</title>
    </svg>`;
  }

  private selectedNote(): TemplateResult | typeof nothing {
    const md = this.model!;
    if (this.selectedRowId === null) return nothing;
    const m = md.rowMinutes.get(this.selectedRowId);
    if (m === undefined) return nothing;
    return html`<p class="sel-note" role="status">
      Selected row: ${this.clock(md.originMs + m * 60_000)}, ${sinceText(m, md.hasTimeZero)} (shaded line, ringed values).
    </p>`;
  }

  override render() {
    const md = this.model;
    if (!md) return nothing;
    const anyRows = md.rowMinutes.size > 0;
    return html`<section aria-labelledby="trends-title" @pointerleave=${() => this.leave()}>
      <div class="head">
        <h2 id="trends-title">Trends ${md.hasTimeZero ? 'since time zero' : '(time zero not set)'}</h2>
        <p class="legend" aria-label="Key">
          <span class="in">● in range</span><span class="out">▲ above / ▼ below target</span><span>○ no target in force</span>
          <span>shaded band = target</span><span class="due">┆ deadline: ✓ met ◔ pending ✕ missed ? no data</span><span>◆ crystalloid ◇ blood A antibiotic C cultures</span>
        </p>
      </div>
      ${
        md.laterDeadlines.length
          ? html`<p class="later">
            Later deadlines, past the right edge:
            ${md.laterDeadlines.map((m, i) => html`${i ? ' · ' : ''}<span class="due-text" title=${m.text}>${this.deadlineLabel(m)} at ${this.clock(m.timeMs)}</span>`)}
          </p>`
          : nothing
      }
      ${this.selectedNote()}
      ${
        anyRows
          ? html`${this.renderEvents()} ${md.series.map((s) => this.renderPanel(s))} ${this.renderAxis()}`
          : html`<p class="empty">No rows yet: the trends appear once values are charted.</p>`
      }
      <p class="caution">${TRENDS_CAUTION}</p>
    </section>`;
  }
}

declare global {
  interface HTMLElementTagNameMap {
    'tm-trends': TmTrends;
  }
  interface HTMLElementEventMap {
    'tm-point': CustomEvent<TrendPointDetail>;
  }
}
