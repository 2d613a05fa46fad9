/**
 * <tm-lock>: the notebook lock on screen (logic in src/storage/lock.ts).
 *
 * - `mode="unlock"`: the lock screen. Asks for the passphrase; a wrong one gets a clear message
 *   and changes nothing. Fires `tm-unlocked` with the codec once the passphrase is right.
 * - `mode="settings"`: switches the lock on (passphrase twice, idle time), locks now, changes the
 *   idle time, or switches the lock off (after the passphrase again). Fires `tm-lock-changed`
 *   after a change was stored, and `tm-lock-now` when the user asks to lock.
 *
 * Passphrases are held only in the form fields and cleared after use; nothing is logged.
 */
import { LitElement, css, html, nothing } from 'lit';
import { customElement, property, state } from 'lit/decorators.js';
import {
  DEFAULT_IDLE_MINUTES,
  IDLE_CHOICES_MINUTES,
  MIN_PASSPHRASE_LENGTH,
  disableLock,
  enableLock,
  passphraseProblem,
  setIdleMinutes,
  unlock,
  type AesGcmCodec,
  type LockRecord,
} from '../storage/lock.js';
import type { Store } from '../storage/store.js';
import { controls, themeVars } from './theme.js';

export class UnlockedEvent extends Event {
  constructor(readonly codec: AesGcmCodec) {
    super('tm-unlocked', { bubbles: true, composed: true });
  }
}

export class LockChangedEvent extends Event {
  constructor(readonly record: LockRecord | undefined) {
    super('tm-lock-changed', { bubbles: true, composed: true });
  }
}

@customElement('tm-lock')
export class TmLock extends LitElement {
  static override styles = [
    themeVars,
    controls,
    css`
      :host {
        display: block;
        font-family: var(--tm-font);
        color: var(--tm-ink);
      }
      :host([mode='unlock']) {
        min-height: 100vh;
        background: var(--tm-paper);
        display: grid;
        place-items: center;
        padding: 16px;
        box-sizing: border-box;
      }
      .card {
        max-width: 440px;
        width: 100%;
        background: var(--tm-surface);
        border: 1px solid var(--tm-line);
        border-radius: var(--tm-radius);
        padding: 20px;
        display: grid;
        gap: 12px;
      }
      h1 {
        font-size: 1.3rem;
        margin: 0;
      }
      h2 {
        font-size: 1rem;
        margin: 0;
      }
      p {
        margin: 0;
      }
      label {
        display: grid;
        gap: 4px;
        font-weight: 600;
      }
      input,
      select {
        min-height: 40px;
        font: inherit;
        padding: 4px 8px;
        border: 1px solid var(--tm-line);
        border-radius: var(--tm-radius);
      }
      fieldset {
        border: 1px solid var(--tm-line);
        border-radius: var(--tm-radius);
        padding: 8px 10px;
        display: grid;
        gap: 8px;
        margin: 0;
      }
      legend {
        font-weight: 700;
      }
      .hint {
        font-size: 0.88rem;
        color: var(--tm-ink-soft);
      }
      .error {
        color: var(--tm-missed);
        font-weight: 600;
      }
      .buttons {
        display: flex;
        flex-wrap: wrap;
        gap: 8px;
      }
    `,
  ];

  @property({ reflect: true }) mode: 'unlock' | 'settings' = 'settings';
  /** The notebook's lock record (undefined: no lock yet). */
  @property({ attribute: false }) record?: LockRecord;
  /** The store (settings mode). */
  @property({ attribute: false }) store?: Store;
  /** Shown on the lock screen when the tab locked with entries not yet saved. */
  @property({ attribute: false }) unsavedKept = false;

  @state() private busy = '';
  @state() private error = '';
  @state() private note = '';
  @state() private confirmOff = false;

  private value(id: string): string {
    return this.renderRoot.querySelector<HTMLInputElement | HTMLSelectElement>(`#${id}`)?.value ?? '';
  }

  private clear(...ids: string[]): void {
    for (const id of ids) {
      const el = this.renderRoot.querySelector<HTMLInputElement>(`#${id}`);
      if (el) el.value = '';
    }
  }

  private async tryUnlock(e: Event): Promise<void> {
    e.preventDefault();
    if (!this.record || this.busy) return;
    const pass = this.value('pass');
    this.busy = 'Checking the passphrase…';
    this.error = '';
    const r = await unlock(this.record, pass);
    this.busy = '';
    if (!r.ok) {
      this.error = r.message;
      this.renderRoot.querySelector<HTMLInputElement>('#pass')?.select();
      return;
    }
    this.clear('pass');
    this.dispatchEvent(new UnlockedEvent(r.codec));
  }

  private async switchOn(e: Event): Promise<void> {
    e.preventDefault();
    if (!this.store || this.busy) return;
    const pass = this.value('new-pass');
    const again = this.value('new-pass-2');
    const minutes = Number(this.value('idle')) || DEFAULT_IDLE_MINUTES;
    this.error = passphraseProblem(pass) || (pass !== again ? 'The two passphrases are not the same.' : '');
    if (this.error) return;
    this.busy = 'Switching the lock on: sealing every worksheet…';
    const r = await enableLock(this.store, pass, { idleMinutes: minutes });
    this.busy = '';
    if (!r.ok) {
      this.error = `The lock was not switched on: ${r.message}`;
      return;
    }
    this.clear('new-pass', 'new-pass-2');
    this.record = r.record;
    this.note = `The lock is on. Tidemark locks after ${minutes} minutes without use.`;
    this.dispatchEvent(new LockChangedEvent(r.record));
  }

  private async changeIdle(e: Event): Promise<void> {
    if (!this.store || !this.record) return;
    const minutes = Number((e.target as HTMLSelectElement).value);
    const r = await setIdleMinutes(this.store, minutes);
    if (!r.ok) {
      this.error = r.message;
      return;
    }
    this.record = { ...this.record, idleMinutes: minutes };
    this.note = `Tidemark now locks after ${minutes} minutes without use.`;
    this.dispatchEvent(new LockChangedEvent(this.record));
  }

  private async switchOff(e: Event): Promise<void> {
    e.preventDefault();
    if (!this.store || !this.record || this.busy) return;
    this.busy = 'Checking the passphrase…';
    this.error = '';
    const check = await unlock(this.record, this.value('off-pass'));
    if (!check.ok) {
      this.busy = '';
      this.error = check.message;
      return;
    }
    this.busy = 'Switching the lock off…';
    const r = await disableLock(this.store);
    this.busy = '';
    if (!r.ok) {
      this.error = `The lock was not switched off: ${r.message}`;
      return;
    }
    this.clear('off-pass');
    this.record = undefined;
    this.confirmOff = false;
    this.note = 'The lock is off: worksheets are stored unencrypted on this device.';
    this.dispatchEvent(new LockChangedEvent(undefined));
  }

  private status() {
    return html`${this.busy ? html`<p role="status">${this.busy}</p>` : nothing}
    ${this.error ? html`<p class="error" role="alert">${this.error}</p>` : nothing}`;
  }

  private renderUnlock() {
    return html`<form class="card" @submit=${(e: Event) => void this.tryUnlock(e)} aria-labelledby="lock-title">
      <h1 id="lock-title">This notebook is locked</h1>
      <p>Its worksheets are stored encrypted on this device. Enter the notebook passphrase to open it.</p>
      ${
        this.unsavedKept
          ? html`<p role="note"><strong>Entries not yet saved are kept in this tab</strong> and are saved when you unlock.</p>`
          : nothing
      }
      <label>Passphrase <input id="pass" type="password" autocomplete="current-password" required autofocus /></label>
      ${this.status()}
      <div class="buttons"><button class="primary" type="submit" ?disabled=${!!this.busy}>Unlock</button></div>
      <p class="hint">A forgotten passphrase cannot be recovered; backups exported before the lock was switched on can still be imported elsewhere.</p>
    </form>`;
  }

  private idleSelect(id: string, value: number, onChange?: (e: Event) => void) {
    return html`<label
      >Lock after
      <select id=${id} @change=${onChange ?? (() => undefined)}>
        ${IDLE_CHOICES_MINUTES.map((m) => html`<option value=${m} ?selected=${m === value}>${m} minutes without use</option>`)}
      </select></label
    >`;
  }

  private renderSettings() {
    const r = this.record;
    if (!r) {
      return html`<fieldset>
        <legend>Notebook lock: off</legend>
        <p class="hint">
          For shared workstations: a passphrase encrypts the stored worksheets, and Tidemark locks after a time without use.
          A forgotten passphrase cannot be recovered: export a backup first.
        </p>
        <form @submit=${(e: Event) => void this.switchOn(e)}>
          <label>New passphrase (at least ${MIN_PASSPHRASE_LENGTH} characters) <input id="new-pass" type="password" autocomplete="new-password" /></label>
          <label>Same passphrase again <input id="new-pass-2" type="password" autocomplete="new-password" /></label>
          ${this.idleSelect('idle', DEFAULT_IDLE_MINUTES)} ${this.status()}
          <div class="buttons"><button type="submit" ?disabled=${!!this.busy}>Switch the lock on</button></div>
        </form>
        ${this.note ? html`<p role="status">${this.note}</p>` : nothing}
      </fieldset>`;
    }
    return html`<fieldset>
      <legend>Notebook lock: on</legend>
      <div class="buttons">
        <button class="primary" @click=${() => this.dispatchEvent(new Event('tm-lock-now', { bubbles: true, composed: true }))}>Lock now</button>
      </div>
      ${this.idleSelect('idle', r.idleMinutes, (e) => void this.changeIdle(e))}
      ${
        this.confirmOff
          ? html`<form @submit=${(e: Event) => void this.switchOff(e)}>
            <label>Passphrase, to switch the lock off <input id="off-pass" type="password" autocomplete="current-password" /></label>
            ${this.status()}
            <div class="buttons">
              <button class="danger" type="submit" ?disabled=${!!this.busy}>Switch the lock off</button>
              <button type="button" @click=${() => (this.confirmOff = false)}>Keep it on</button>
            </div>
          </form>`
          : html`<div class="buttons"><button @click=${() => (this.confirmOff = true)}>Switch the lock off…</button></div>`
      }
      ${this.note ? html`<p role="status">${this.note}</p>` : nothing}
    </fieldset>`;
  }

  override render() {
    return this.mode === 'unlock' ? this.renderUnlock() : this.renderSettings();
  }
}

declare global {
  interface HTMLElementTagNameMap {
    'tm-lock': TmLock;
  }
  interface HTMLElementEventMap {
    'tm-unlocked': UnlockedEvent;
    'tm-lock-changed': LockChangedEvent;
  }
}
