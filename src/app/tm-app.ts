/**
 * <tm-app>: the shell. Header with the worksheet and its time-zero clock, the notebook list, the
 * worksheet grid, the goal panel, the facts panel and the exports. It turns intent from the
 * elements into commands on the editing session and re-renders from the session's snapshot.
 *
 * Services come in as properties: `store` (IndexedDB, or a fake in tests) and `clock` (the one
 * time source). Nothing here reads the wall clock directly.
 */
import { provide } from '@lit/context';
import { LitElement, css, html, nothing } from 'lit';
import { customElement, property, state } from 'lit/decorators.js';
import { nextTickMs } from '../goals/clocks.js';
import { suggestTimeZero } from '../goals/suggest.js';
import '../goals/tm-custom-goals.js';
import type { CustomGoalsEvent } from '../goals/tm-custom-goals.js';
import '../goals/tm-time-zero-suggestion.js';
import '../sheet/tm-derived-columns.js';
import type { DerivedColumnsEvent } from '../sheet/tm-derived-columns.js';
import type { HighlightEvent } from '../goals/tm-time-zero-suggestion.js';
import { CUSTOM_SET_ID, defaultRegistry, GOAL_SETS } from '../goals/registry.js';
import { evaluate, worksheetSetIds } from '../goals/engine.js';
import type { GoalStatus } from '../goals/status.js';
import '../goals/tm-goal-panel.js';
import type { GoalSelectEvent, GoalSetsEvent } from '../goals/tm-goal-panel.js';
import { systemClock, type Clock } from '../sheet/clock.js';
import type { Derivation } from '../sheet/derived.js';
import { rederive } from '../sheet/rederive.js';
import type { Worksheet } from '../sheet/model.js';
import '../sheet/tm-grid.js';
import type { TmGridEventDetails } from '../sheet/tm-grid.js';
import type { TmColumnsDetail } from '../sheet/tm-column-chooser.js';
import { formatClock, formatDuration, formatOffset } from '../sheet/time.js';
import { createWorksheet, setFacts } from '../sheet/worksheet.js';
import type { NotebookListing, Store } from '../storage/store.js';
import { CAUTION } from './caution.js';
import { clockContext } from './contexts.js';
import './tm-print.js';
import { WorksheetSession, type SessionSnapshot } from './session.js';
import { controls, themeVars } from './theme.js';
import './tm-exports.js';
import './tm-facts.js';
import type { FactsEvent } from './tm-facts.js';
import './tm-notebook.js';
import './tm-trends.js';
import './tm-units.js';
import type { UnitsEvent } from './tm-units.js';
import { DisplayUnitPrefs, DUAL_UNIT_KEYS, displayUnit } from '../sheet/display-units.js';
import type { UnitDef } from '../sheet/measures.js';
import type { NotebookEntry, NotebookEvent } from './tm-notebook.js';

const BASIS_WORDS: Record<string, string> = {
  triage: 'triage',
  recognition: 'clinical recognition',
  criteria: 'criteria met',
  other: 'other',
};

/** Trends are open when a worksheet with at most this many rows is opened. */
const TRENDS_OPEN_UP_TO_ROWS = 300;

type Panel = 'none' | 'facts' | 'exports' | 'columns' | 'own-goals';

/** An event from tm-grid, typed by its name. */
type GridEvent<K extends keyof TmGridEventDetails> = CustomEvent<TmGridEventDetails[K]>;

@customElement('tm-app')
export class TmApp extends LitElement {
  static override styles = [
    themeVars,
    controls,
    css`
      :host {
        display: block;
        min-height: 100vh;
        background: var(--tm-paper);
        color: var(--tm-ink);
        font-family: var(--tm-font);
        font-size: 16px;
        line-height: 1.4;
      }
      .top {
        display: flex;
        align-items: center;
        gap: 16px;
        padding: 8px 16px;
        background: var(--tm-ink);
        color: #fff;
      }
      .brand {
        font-weight: 800;
        letter-spacing: 0.04em;
        font-size: 1.15rem;
      }
      .brand small {
        font-weight: 400;
        opacity: 0.8;
        margin-left: 6px;
        letter-spacing: 0;
      }
      .caution {
        flex: 1;
        margin: 0;
        font-size: 0.88rem;
        opacity: 0.95;
      }
      .save {
        font-weight: 600;
        white-space: nowrap;
        padding: 4px 10px;
        border-radius: 999px;
        background: rgba(255, 255, 255, 0.12);
      }
      .save.failed {
        background: #fbe4e4;
        color: var(--tm-missed);
      }
      .storage {
        font-size: 0.82rem;
        white-space: nowrap;
        opacity: 0.9;
      }
      .banner {
        margin: 12px 16px 0;
        padding: 10px 14px;
        border-radius: var(--tm-radius);
        border: 1px solid var(--tm-line);
        background: var(--tm-surface);
        display: flex;
        flex-wrap: wrap;
        gap: 10px;
        align-items: center;
      }
      .banner.failed {
        border: 2px solid var(--tm-missed);
        background: var(--tm-missed-bg);
      }
      .banner p {
        margin: 0;
        flex: 1 1 320px;
      }
      .layout {
        display: grid;
        grid-template-columns: minmax(200px, 250px) minmax(0, 1fr) minmax(300px, 380px);
        gap: 16px;
        padding: 12px 16px 24px;
        align-items: start;
      }
      .layout.rail-hidden {
        grid-template-columns: minmax(0, 1fr) minmax(300px, 380px);
      }
      @media (max-width: 1100px) {
        .layout,
        .layout.rail-hidden {
          grid-template-columns: minmax(0, 1fr);
        }
      }
      .sheet-head {
        display: flex;
        flex-wrap: wrap;
        align-items: flex-end;
        gap: 8px 24px;
        margin-bottom: 10px;
      }
      .sheet-head h1 {
        margin: 0;
        font-size: 1.45rem;
      }
      .facts-line {
        color: var(--tm-ink-soft);
      }
      .t0 {
        display: grid;
        line-height: 1.1;
      }
      .t0 .elapsed {
        font-size: 2.1rem;
        font-weight: 750;
        font-variant-numeric: tabular-nums;
      }
      .t0 .basis {
        color: var(--tm-ink-soft);
        font-size: 0.95rem;
      }
      .t0.unset .elapsed {
        font-size: 1.3rem;
        color: var(--tm-pending);
      }
      .tools {
        display: flex;
        flex-wrap: wrap;
        gap: 8px;
        margin-left: auto;
      }
      .demo-tag {
        display: inline-block;
        font-size: 0.8rem;
        font-weight: 700;
        padding: 2px 8px;
        border-radius: 999px;
        border: 1px dashed var(--tm-ink-soft);
        color: var(--tm-ink-soft);
        vertical-align: middle;
        margin-left: 8px;
      }
      .drawer {
        border: 1px solid var(--tm-line);
        border-radius: var(--tm-radius);
        background: var(--tm-surface);
        padding: 14px;
        margin-bottom: 12px;
      }
      aside.goals {
        position: sticky;
        top: 8px;
        max-height: calc(100vh - 16px);
        overflow: auto;
      }
      .keys {
        font-size: 0.85rem;
        color: var(--tm-ink-soft);
        margin-top: 10px;
      }
      kbd {
        font-family: var(--tm-mono);
        border: 1px solid var(--tm-line);
        border-bottom-width: 2px;
        border-radius: 4px;
        padding: 0 4px;
        background: var(--tm-surface);
      }
      .trends {
        display: block;
        margin-top: 16px;
      }
      .print-only {
        display: none;
      }
      @media print {
        :host {
          background: #fff;
        }
        .print-only {
          display: block;
        }
        .top,
        .banner,
        .layout {
          display: none;
        }
      }
      .empty {
        padding: 24px;
        border: 1px dashed var(--tm-line);
        border-radius: var(--tm-radius);
        background: var(--tm-surface);
      }
    `,
  ];

  /** The notebook store. Set by main.ts (IndexedDB) or by a test. */
  @property({ attribute: false }) store?: Store;

  /** The one time source. */
  @provide({ context: clockContext })
  @property({ attribute: false })
  clock: Clock = systemClock;

  /** Shows the one-sentence welcome with the demo and new-worksheet choices. */
  @property({ type: Boolean }) welcome = false;

  /**
   * Whether the browser agreed to keep the notebook under storage pressure (navigator.storage.persist),
   * set by main.ts; shown beside the save state. Undefined: not known yet.
   */
  @property({ attribute: false }) persistence?: 'persisted' | 'best-effort' | 'unsupported';

  @state() private listing: NotebookListing = { summaries: [], unreadable: [] };
  @state() private snap?: SessionSnapshot;
  @state() private derivation?: Derivation;
  @state() private goals: GoalStatus[] = [];
  @state() private now = 0;
  @state() private highlight: ReadonlySet<string> = new Set();
  @state() private panel: Panel = 'none';
  @state() private railHidden = false;
  @state() private showTrends = true;
  /** The row the user is on in the grid (marked on the trends). */
  @state() private activeRow: string | null = null;
  @state() private message = '';
  @state() private blocked = '';
  @state() private unitPrefs: DisplayUnitPrefs = {};
  /** The units the grid shows, kept as one object so the grid re-renders only when they change. */
  @state() private unitMap: ReadonlyMap<string, UnitDef> = unitMapOf({});
  /**
   * The print layout exists only while printing: it rebuilds the note, the trends and the
   * timeline, which on every edit of a long worksheet cost more than the grid and the goals.
   */
  @state() private printing = false;

  private session?: WorksheetSession;
  private unsubscribe?: () => void;
  private unwatch?: () => void;
  private timer?: ReturnType<typeof setTimeout>;
  private derivedFor?: Worksheet;
  private goalsFor?: { ws: Worksheet; minute: number };

  override connectedCallback(): void {
    super.connectedCallback();
    this.addEventListener('keydown', this.onKey);
    window.addEventListener('beforeprint', this.onBeforePrint);
    window.addEventListener('afterprint', this.onAfterPrint);
    this.tick();
  }

  override disconnectedCallback(): void {
    super.disconnectedCallback();
    this.removeEventListener('keydown', this.onKey);
    window.removeEventListener('beforeprint', this.onBeforePrint);
    window.removeEventListener('afterprint', this.onAfterPrint);
    this.unsubscribe?.();
    this.unwatch?.();
    if (this.timer) clearTimeout(this.timer);
  }

  private readonly onBeforePrint = (): void => {
    this.printing = true;
    // print() called from a script (the Print button) lays the page out before any microtask
    // runs, so render the print layout now rather than in Lit's next update.
    flushUpdatesNow(this);
  };

  private readonly onAfterPrint = (): void => {
    this.printing = false;
  };

  protected override updated(changed: Map<PropertyKey, unknown>): void {
    if (changed.has('store') && this.store) void this.load();
  }

  /** Reads the notebook and opens the last worksheet used (or the first one). */
  private async load(): Promise<void> {
    this.unwatch?.();
    await this.refreshListing();
    const units = DisplayUnitPrefs.safeParse(await this.store?.getMeta('displayUnits').catch(() => undefined));
    if (units.success) {
      this.unitPrefs = units.data;
      this.unitMap = unitMapOf(units.data);
    }
    const last = this.store ? await this.store.getMeta('lastOpen').catch(() => undefined) : undefined;
    const first = this.listing.summaries.find((s) => s.id === last && !s.archived) ?? this.listing.summaries.find((s) => !s.archived);
    if (first) await this.open(first.id);
    this.unwatch = this.store?.onExternalChange((n) => void this.onExternal(n.id));
    this.tick();
  }

  /** Recomputes clocks and goal statuses now, and schedules the next tick. */
  tick(): void {
    if (this.timer) clearTimeout(this.timer);
    this.now = this.clock.now();
    this.recompute();
    // On each minute of the clocks; every second in the last ten minutes before a deadline.
    const tz = this.snap?.worksheet.timeZero;
    const next = nextTickMs(this.goals, this.now, tz ? Date.parse(tz.time) : undefined);
    this.timer = setTimeout(() => this.tick(), Math.min(Math.max(next - this.now, 50), 60_000));
  }

  private recompute(): void {
    const ws = this.snap?.worksheet;
    if (!ws) {
      this.goals = [];
      this.derivation = undefined;
      return;
    }
    if (this.derivedFor !== ws) {
      // A cell edit recomputes only the rows it reaches; anything else recomputes everything.
      this.derivation = rederive(this.derivation, this.derivedFor, ws);
      this.derivedFor = ws;
    }
    // Statuses change with the worksheet and with the clock (at second resolution near deadlines).
    const second = Math.floor(this.now / 1000);
    if (!this.goalsFor || this.goalsFor.ws !== ws || this.goalsFor.minute !== second) {
      // Sets saved by another version of the app may be unknown here: skip them rather than fail.
      const setIds = worksheetSetIds(ws).filter((id) => id === CUSTOM_SET_ID || defaultRegistry.has(id));
      this.goals = evaluate(ws, setIds, this.now, { derived: this.derivation?.rows ?? [] });
      this.goalsFor = { ws, minute: second };
    }
  }

  private async refreshListing(): Promise<void> {
    if (!this.store) return;
    try {
      this.listing = await this.store.list();
    } catch (e) {
      this.message = `The notebook could not be read: ${(e as Error).message}`;
    }
  }

  private async open(id: string): Promise<void> {
    if (!this.store) return;
    let ws: Worksheet | undefined;
    try {
      ws = await this.store.get(id);
    } catch (e) {
      this.message = `This worksheet could not be read: ${(e as Error).message}`;
      return;
    }
    if (!ws) return;
    this.unsubscribe?.();
    this.session = new WorksheetSession(ws, this.store, this.clock);
    // The trends redraw on every edit; on a long worksheet they start closed so typing stays quick
    // (README, Performance). The Trends button opens them.
    this.showTrends = ws.rows.length <= TRENDS_OPEN_UP_TO_ROWS;
    this.unsubscribe = this.session.subscribe((s) => {
      this.snap = s;
      // A row entered "now" must count at once, not at the next tick.
      this.now = this.clock.now();
      this.recompute();
      if (s.save.kind === 'saved') void this.refreshListing();
    });
    this.snap = this.session.snapshot();
    this.highlight = new Set();
    this.recompute();
    void this.store.setMeta('lastOpen', id);
  }

  private async onExternal(id: string): Promise<void> {
    await this.refreshListing();
    if (this.session && this.snap?.worksheet.id === id && this.store) {
      const current = await this.store.get(id).catch(() => undefined);
      if (current) this.session.external(current);
      else this.message = 'This worksheet was deleted in another tab.';
    }
  }

  private async onNotebook(e: NotebookEvent): Promise<void> {
    const a = e.action;
    if (!this.store) return;
    if (a.type === 'open') return this.open(a.id);
    if (a.type === 'create') {
      const ws = createWorksheet({ clock: this.clock }, { label: a.label, displayOffset: localOffset(this.clock.now()) });
      const r = await this.store.create(ws);
      if (!r.ok) {
        this.message = `The new worksheet was not saved: ${r.message}`;
        return;
      }
      await this.refreshListing();
      await this.open(ws.id);
      this.panel = 'facts';
      return;
    }
    if (a.type === 'delete') {
      const r = await this.store.remove(a.id);
      if (!r.ok) this.message = `Not deleted: ${r.message}`;
      if (this.snap?.worksheet.id === a.id) {
        this.unsubscribe?.();
        this.session = undefined;
        this.snap = undefined;
        this.recompute();
      }
      await this.refreshListing();
      return;
    }
    // Rename and archive are facts of a worksheet: write them through its own session when open.
    const patch = a.type === 'rename' ? { label: a.label } : { archived: a.archived };
    if (this.session && this.snap?.worksheet.id === a.id) {
      await this.session.setFacts(patch);
    } else {
      const ws = await this.store.get(a.id);
      if (!ws) return;
      const r = await this.store.commit(setFacts({ clock: this.clock }, ws, patch), ws.rev);
      if (!r.ok) this.message = `Not saved: ${r.message}`;
    }
    await this.refreshListing();
  }

  /** Follows the grid's active row (its cells carry data-row) to mark it on the trends. */
  private onGridFocus(e: FocusEvent): void {
    const el = e.composedPath()[0];
    const row = el instanceof HTMLElement ? el.closest<HTMLElement>('[data-row]')?.dataset['row'] : undefined;
    if (row && row !== this.activeRow) this.activeRow = row;
  }

  private onKey = (e: KeyboardEvent): void => {
    if (!e.altKey || e.ctrlKey || e.metaKey) return;
    const k = e.key.toLowerCase();
    const focus = (sel: string) => {
      const el = this.renderRoot.querySelector<HTMLElement>(sel);
      el?.focus();
      return el;
    };
    if (k === 'w') {
      this.railHidden = false;
      void this.updateComplete.then(() => {
        const nb = this.renderRoot.querySelector('tm-notebook');
        (nb?.shadowRoot?.querySelector('button.open[aria-current="page"], button.open, input') as HTMLElement | null)?.focus();
      });
    } else if (k === 'g') {
      const panel = this.renderRoot.querySelector('tm-goal-panel');
      (panel?.shadowRoot?.querySelector('button.goal') as HTMLElement | null)?.focus();
    } else if (k === 'f') {
      this.panel = this.panel === 'facts' ? 'none' : 'facts';
    } else if (k === 'e') {
      this.panel = this.panel === 'exports' ? 'none' : 'exports';
    } else if (k === 's') {
      focus('tm-grid');
      void this.renderRoot.querySelector('tm-grid')?.focusActiveCell();
    } else return;
    e.preventDefault();
  };

  private header(ws: Worksheet) {
    const tz = ws.timeZero;
    const elapsed = tz ? this.now - Date.parse(tz.time) : 0;
    const weight = ws.weightKg !== undefined ? `${ws.weightKg} kg` : 'no weight';
    return html`<div class="sheet-head">
      <div>
        <h1>${ws.label}${ws.demo ? html`<span class="demo-tag">fictional demo</span>` : nothing}</h1>
        <div class="facts-line">
          ${weight}${ws.heightCm !== undefined ? ` · ${ws.heightCm} cm` : ''} · times in UTC${formatOffset(ws.displayOffset)}
        </div>
      </div>
      ${
        tz
          ? html`<div class="t0" role="timer" aria-live="off" aria-label="Time since time zero">
            <span class="elapsed">${formatDuration(elapsed)} since time zero</span>
            <span class="basis">time zero ${formatClock(tz.time, ws.displayOffset)}, ${BASIS_WORDS[tz.basis]}${tz.reason ? ` — ${tz.reason}` : ''}</span>
          </div>`
          : html`<div class="t0 unset"><span class="elapsed">Time zero not set</span><span class="basis">Set it in the facts.</span></div>`
      }
      <div class="tools">
        <button @click=${() => (this.panel = this.panel === 'facts' ? 'none' : 'facts')} aria-expanded=${this.panel === 'facts'}>
          Facts &amp; time zero
        </button>
        <button @click=${() => (this.panel = this.panel === 'exports' ? 'none' : 'exports')} aria-expanded=${this.panel === 'exports'}>
          Export
        </button>
        <button @click=${() => this.toggle('columns')} aria-expanded=${this.panel === 'columns'}>Calculated columns</button>
        <button @click=${() => this.toggle('own-goals')} aria-expanded=${this.panel === 'own-goals'}>Own goals</button>
        <button @click=${() => (this.showTrends = !this.showTrends)} aria-pressed=${this.showTrends ? 'true' : 'false'}>Trends</button>
        <button @click=${() => (this.railHidden = !this.railHidden)} aria-pressed=${this.railHidden ? 'false' : 'true'}>Worksheets</button>
      </div>
    </div>`;
  }

  private toggle(panel: Panel): void {
    this.panel = this.panel === panel ? 'none' : panel;
  }

  private saveBadge() {
    const s = this.snap?.save;
    if (!s) return nothing;
    if (s.kind === 'saved') return html`<span class="save" role="status">✓ All changes saved on this device</span>`;
    if (s.kind === 'saving') return html`<span class="save" role="status">◔ Saving…</span>`;
    return html`<span class="save failed" role="status">✕ Not saved</span>`;
  }

  private storageNote() {
    const p = this.persistence;
    if (!p) return nothing;
    if (p === 'persisted') {
      return html`<span class="storage" title="The browser keeps this notebook until you remove it.">◆ Storage kept by the browser</span>`;
    }
    const why =
      p === 'best-effort'
        ? 'The browser did not grant persistent storage: it may clear this notebook when the device runs short of space. Export backups.'
        : 'This browser cannot promise to keep the notebook. Export backups.';
    return html`<span class="storage" title=${why}>◇ Storage may be cleared: export backups</span>`;
  }

  /** True while an edit is on screen but not yet (or not) saved. */
  hasUnsavedWork(): boolean {
    const s = this.snap?.save.kind;
    return s !== undefined && s !== 'saved';
  }

  private banners() {
    const out = [];
    if (this.welcome) {
      out.push(html`<div class="banner" role="region" aria-label="Welcome">
        <p>
          <strong>Tidemark keeps a timed worksheet of a sepsis resuscitation and shows which bundle goals are still open.</strong>
          The demo is an invented, fictional case.
        </p>
        <button class="primary" @click=${() => this.openDemo()}>Open the demo</button>
        <button @click=${() => this.startNew()}>New worksheet</button>
        <button @click=${() => (this.welcome = false)}>Dismiss</button>
      </div>`);
    }
    const s = this.snap?.save;
    if (s?.kind === 'failed') {
      out.push(html`<div class="banner failed" role="alert">
        <p>
          <strong>Not saved.</strong> ${s.message} Your entries are still on screen, marked “not saved”. Export a backup now, then
          try again.
        </p>
        <button class="primary" @click=${() => (this.panel = 'exports')}>Export now</button>
        <button @click=${() => void this.session?.retry()}>Try saving again</button>
      </div>`);
    }
    if (this.snap?.notice) out.push(html`<div class="banner" role="status"><p>${this.snap.notice}</p></div>`);
    if (this.message) {
      out.push(html`<div class="banner" role="alert">
        <p>${this.message}</p>
        <button @click=${() => (this.message = '')}>Dismiss</button>
      </div>`);
    }
    if (this.blocked) out.push(html`<div class="banner failed" role="alert"><p>${this.blocked}</p></div>`);
    return out;
  }

  /** Shown by main.ts when another tab holds an older or newer version of the notebook. */
  showBlocked(text: string): void {
    this.blocked = text;
  }

  private openDemo(): void {
    this.welcome = false;
    const demo = this.listing.summaries.find((s) => s.demo);
    if (demo) void this.open(demo.id);
  }

  private startNew(): void {
    this.welcome = false;
    this.railHidden = false;
    void this.updateComplete.then(() => {
      const nb = this.renderRoot.querySelector('tm-notebook');
      (nb?.shadowRoot?.querySelector('#new-label') as HTMLElement | null)?.focus();
    });
  }

  private async setUnits(prefs: DisplayUnitPrefs): Promise<void> {
    this.unitPrefs = prefs;
    this.unitMap = unitMapOf(prefs);
    const r = await this.store?.setMeta('displayUnits', prefs);
    if (r && !r.ok) this.message = `Your unit choice was not saved: ${r.message}`;
  }

  private entries(): NotebookEntry[] {
    return this.listing.summaries.map((s) => {
      const e: NotebookEntry = { id: s.id, label: s.label, archived: s.archived, updatedAt: s.updatedAt, rows: s.rowCount };
      if (s.demo) e.demo = true;
      return e;
    });
  }

  override render() {
    const ws = this.snap?.worksheet;
    return html`
      ${
        ws && this.printing
          ? html`<tm-print class="print-only" .worksheet=${ws} .derived=${this.derivation?.rows ?? []} .goals=${this.goals} .now=${this.now}></tm-print>`
          : nothing
      }
      <header class="top">
        <div class="brand">Tidemark<small>resuscitation worksheet</small></div>
        <p class="caution" role="note">${CAUTION}</p>
        ${this.saveBadge()} ${this.storageNote()}
      </header>
      ${this.banners()}
      <div class="layout ${this.railHidden ? 'rail-hidden' : ''}">
        ${
          this.railHidden
            ? nothing
            : html`<aside class="rail">
              <tm-notebook .entries=${this.entries()} .currentId=${ws?.id} @tm-notebook=${(e: NotebookEvent) => void this.onNotebook(e)}></tm-notebook>
              <tm-units .prefs=${this.unitPrefs} @tm-units=${(e: UnitsEvent) => void this.setUnits(e.prefs)}></tm-units>
              <slot name="rail-end"></slot>
              <p class="keys">
                Keys: <kbd>Alt</kbd>+<kbd>S</kbd> worksheet, <kbd>Alt</kbd>+<kbd>G</kbd> goals, <kbd>Alt</kbd>+<kbd>W</kbd> worksheets,
                <kbd>Alt</kbd>+<kbd>F</kbd> facts, <kbd>Alt</kbd>+<kbd>E</kbd> export, <kbd>Alt</kbd>+<kbd>N</kbd> new row.
              </p>
            </aside>`
        }
        <main>
          ${
            ws
              ? html`${this.header(ws)}
                ${
                  this.panel === 'facts'
                    ? html`<div class="drawer">
                      <tm-facts
                        .worksheet=${ws}
                        .now=${this.now}
                        @tm-facts=${(e: FactsEvent) => void this.session?.setFacts(e.patch)}
                        @tm-close=${() => (this.panel = 'none')}
                      ></tm-facts>
                      <tm-time-zero-suggestion
                        .suggestions=${suggestTimeZero(ws, this.now)}
                        .offset=${ws.displayOffset}
                        .timeZero=${ws.timeZero?.time}
                        .shockTime=${ws.shockTime}
                        @tm-facts=${(e: FactsEvent) => void this.session?.setFacts(e.patch)}
                        @tm-highlight=${(e: HighlightEvent) => (this.highlight = new Set(e.rowIds))}
                      ></tm-time-zero-suggestion>
                    </div>`
                    : nothing
                }
                ${
                  this.panel === 'columns'
                    ? html`<div class="drawer">
                      <tm-derived-columns
                        .worksheet=${ws}
                        .now=${this.now}
                        @tm-derived-columns=${(e: DerivedColumnsEvent) => void this.session?.setDerivedColumns(e.columns)}
                        @tm-close=${() => (this.panel = 'none')}
                      ></tm-derived-columns>
                    </div>`
                    : nothing
                }
                ${
                  this.panel === 'own-goals'
                    ? html`<div class="drawer">
                      <tm-custom-goals
                        .worksheet=${ws}
                        .now=${this.now}
                        @tm-custom-goals=${(e: CustomGoalsEvent) => void this.session?.setCustomGoals(e.goals)}
                        @tm-close=${() => (this.panel = 'none')}
                      ></tm-custom-goals>
                    </div>`
                    : nothing
                }
                ${
                  this.panel === 'exports'
                    ? html`<div class="drawer">
                      <tm-exports
                        .worksheet=${ws}
                        .goals=${this.goals}
                        .now=${this.now}
                        .store=${this.store}
                        @tm-close=${() => (this.panel = 'none')}
                        @tm-imported=${() => void this.refreshListing()}
                      ></tm-exports>
                    </div>`
                    : nothing
                }
                <tm-grid
                  .worksheet=${ws}
                  .derived=${this.derivation?.rows ?? []}
                  .pending=${this.snap?.pending ?? new Map()}
                  .highlightRows=${this.highlight}
                  .displayUnits=${this.unitMap}
                  .now=${this.now}
                  @tm-edit=${(e: GridEvent<'tm-edit'>) => void this.session?.editCells(e.detail.edits)}
                  @tm-paste=${(e: GridEvent<'tm-paste'>) => void this.session?.paste(e.detail.newRows, e.detail.edits)}
                  @tm-add-row=${(e: GridEvent<'tm-add-row'>) => void this.session?.addRow(e.detail.time, e.detail.offset).saved}
                  @tm-row-time=${(e: GridEvent<'tm-row-time'>) => void this.session?.setRowTime(e.detail.rowId, e.detail.time, e.detail.offset)}
                  @tm-delete-row=${(e: GridEvent<'tm-delete-row'>) => void this.session?.deleteRow(e.detail.rowId)}
                  @tm-columns=${(e: CustomEvent<TmColumnsDetail>) => void this.session?.setColumns(e.detail.columns)}
                  @tm-undo=${() => void this.session?.undo()}
                  @tm-redo=${() => void this.session?.redo()}
                  @focusin=${(e: FocusEvent) => this.onGridFocus(e)}
                ></tm-grid>
                ${
                  this.showTrends
                    ? html`<tm-trends
                      class="trends"
                      .worksheet=${ws}
                      .derived=${this.derivation?.rows ?? []}
                      .goals=${this.goals}
                      .now=${this.now}
                      .selectedRowId=${this.activeRow}
                      @tm-point=${(e: CustomEvent<{ rowId: string | null }>) =>
                        (this.highlight = e.detail.rowId ? new Set([e.detail.rowId]) : new Set())}
                    ></tm-trends>`
                    : nothing
                }`
              : html`<div class="empty">
                <p><strong>Tidemark keeps a timed worksheet of a sepsis resuscitation and shows which bundle goals are still open.</strong></p>
                <p>Open a worksheet from the list, or start a new one with a bed or case code.</p>
              </div>`
          }
        </main>
        ${
          ws
            ? html`<aside class="goals">
              <tm-goal-panel
                .goals=${this.goals}
                .now=${this.now}
                .offset=${ws.displayOffset}
                .sets=${GOAL_SETS.map((s) => ({ id: s.id, title: s.title, source: s.source }))}
                .activeSets=${ws.goalSets}
                .noTimeZero=${!ws.timeZero}
                @tm-goal-select=${(e: GoalSelectEvent) => (this.highlight = new Set([...e.supportRowIds, ...e.failRowIds]))}
                @tm-goal-sets=${(e: GoalSetsEvent) => void this.session?.setFacts({ goalSets: e.setIds })}
              ></tm-goal-panel>
            </aside>`
            : nothing
        }
      </div>
    `;
  }
}

/**
 * Runs every pending Lit update under `root` now, nested elements included (they are created by
 * their parent's update and schedule their own), instead of in the next microtasks.
 */
export function flushUpdatesNow(root: Element): void {
  type Pending = Element & { isUpdatePending?: boolean; performUpdate?: () => void };
  for (let pass = 0; pass < 20; pass++) {
    let ran = false;
    const visit = (el: Pending): void => {
      if (el.isUpdatePending === true && typeof el.performUpdate === 'function') {
        el.performUpdate();
        ran = true;
      }
      const inner = el.shadowRoot;
      if (inner) for (const child of inner.querySelectorAll<Pending>('*')) visit(child);
    };
    visit(root);
    if (!ran) return;
  }
}

/** Units the grid shows for the measures with a choice. */
function unitMapOf(prefs: DisplayUnitPrefs): ReadonlyMap<string, UnitDef> {
  const m = new Map<string, UnitDef>();
  for (const key of DUAL_UNIT_KEYS) {
    const u = displayUnit(key, prefs);
    if (u) m.set(key, u);
  }
  return m;
}

/** The device's offset from UTC at an instant, in minutes (the default for a new worksheet). */
export function localOffset(ms: number): number {
  return -new Date(ms).getTimezoneOffset();
}

declare global {
  interface HTMLElementTagNameMap {
    'tm-app': TmApp;
  }
}
