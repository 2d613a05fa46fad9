/**
 * <tm-exports>: the worksheet leaves the tool here. Note text with a preview of exactly what is
 * copied, CSV, JSON backup (this worksheet or the whole notebook), FHIR R4 Bundle, print; and the
 * import of a JSON backup, which never replaces a worksheet unless the user chooses to.
 *
 * Files are made in the page and saved with a download link: nothing is sent anywhere.
 *
 * @fires tm-close - the user closed the panel.
 * @fires tm-imported - worksheets were imported into the notebook.
 */
import { LitElement, css, html, nothing } from 'lit';
import { customElement, property, state } from 'lit/decorators.js';
import { worksheetToCsv } from '../export/csv.js';
import { worksheetToFhir } from '../export/fhir.js';
import { worksheetNote } from '../export/note.js';
import type { GoalStatus } from '../goals/status.js';
import type { Worksheet } from '../sheet/model.js';
import { backupFileName, backupToJson, createBackup, importBackup, type ClashChoice, type ImportPlan } from '../storage/backup.js';
import type { Store } from '../storage/store.js';
import { controls } from './theme.js';

/** A file name safe on every system, from the worksheet label. */
export function fileStem(label: string): string {
  return (
    label
      .normalize('NFKD')
      .replace(/[^A-Za-z0-9]+/g, '-')
      .replace(/^-+|-+$/g, '')
      .toLowerCase()
      .slice(0, 40) || 'worksheet'
  );
}

function download(name: string, type: string, text: string): void {
  const url = URL.createObjectURL(new Blob([text], { type }));
  const a = document.createElement('a');
  a.href = url;
  a.download = name;
  a.rel = 'noopener';
  document.body.append(a);
  a.click();
  a.remove();
  setTimeout(() => URL.revokeObjectURL(url), 1000);
}

@customElement('tm-exports')
export class TmExports extends LitElement {
  static override styles = [
    controls,
    css`
      :host {
        display: block;
        font-family: var(--tm-font, system-ui, sans-serif);
      }
      h2 {
        font-size: 1.15rem;
        margin: 0 0 8px;
      }
      h3 {
        font-size: 1rem;
        margin: 14px 0 6px;
      }
      .grid {
        display: grid;
        grid-template-columns: minmax(0, 1.4fr) minmax(0, 1fr);
        gap: 16px;
      }
      @media (max-width: 900px) {
        .grid {
          grid-template-columns: 1fr;
        }
      }
      pre {
        font-family: var(--tm-mono, monospace);
        font-size: 0.85rem;
        background: var(--tm-paper, #f6f4ef);
        border: 1px solid var(--tm-line, #c9cdd4);
        border-radius: var(--tm-radius, 6px);
        padding: 10px;
        max-height: 420px;
        overflow: auto;
        white-space: pre;
        margin: 0;
      }
      .buttons {
        display: flex;
        flex-wrap: wrap;
        gap: 8px;
      }
      .spaced {
        margin-top: 8px;
      }
      .status {
        min-height: 1.4em;
        margin-top: 6px;
      }
      ul {
        padding-left: 18px;
      }
      li {
        margin-bottom: 6px;
      }
    `,
  ];

  @property({ attribute: false }) worksheet?: Worksheet;
  @property({ attribute: false }) goals: readonly GoalStatus[] = [];
  @property({ attribute: false }) now = 0;
  @property({ attribute: false }) store?: Store;

  @state() private status = '';
  @state() private importProblems: string[] = [];
  @state() private plan?: ImportPlan;
  @state() private choices = new Map<string, ClashChoice>();
  private importText = '';

  /** The note exactly as it will be copied. */
  noteText(): string {
    if (!this.worksheet) return '';
    return worksheetNote(this.worksheet, { atMs: this.now, goals: this.goals });
  }

  private async copyNote(): Promise<void> {
    const text = this.noteText();
    try {
      await navigator.clipboard.writeText(text);
      this.status = 'Note copied. Paste it into the record and check it there.';
    } catch {
      // Clipboard refused (no permission or not focused): select the preview so Ctrl+C works.
      const pre = this.renderRoot.querySelector('pre');
      if (pre) {
        const range = document.createRange();
        range.selectNodeContents(pre);
        const sel = getSelection();
        sel?.removeAllRanges();
        sel?.addRange(range);
      }
      this.status = 'The browser did not allow copying: the note is selected, press Ctrl+C.';
    }
  }

  private stem(): string {
    return fileStem(this.worksheet?.label ?? 'worksheet');
  }

  private csv(): void {
    if (!this.worksheet) return;
    download(`${this.stem()}.csv`, 'text/csv;charset=utf-8;header=present', worksheetToCsv(this.worksheet));
    this.status = 'CSV saved to your downloads.';
  }

  private fhir(): void {
    if (!this.worksheet) return;
    const bundle = worksheetToFhir(this.worksheet, { atMs: this.now });
    download(`${this.stem()}.fhir.json`, 'application/fhir+json', JSON.stringify(bundle, null, 2));
    this.status = 'FHIR R4 Bundle saved to your downloads.';
  }

  private async backup(all: boolean): Promise<void> {
    if (!this.worksheet) return;
    let worksheets: Worksheet[] = [this.worksheet];
    if (all && this.store) {
      const got = await this.store.getAll();
      worksheets = got.worksheets;
      if (got.unreadable.length) this.status = `${got.unreadable.length} stored worksheet(s) could not be read and are not in the backup.`;
    }
    const clock = { now: () => this.now };
    const doc = createBackup(worksheets, clock);
    download(backupFileName(doc), 'application/json', backupToJson(doc));
    this.status = `Backup of ${worksheets.length} worksheet(s) saved to your downloads.`;
  }

  private async pickFile(e: Event): Promise<void> {
    const input = e.target as HTMLInputElement;
    const file = input.files?.[0];
    input.value = '';
    if (!file) return;
    this.importText = await file.text();
    this.choices = new Map();
    await this.runImport();
  }

  private async runImport(): Promise<void> {
    if (!this.store) return;
    const out = await importBackup(this.store, this.importText, this.choices);
    this.importProblems = [];
    if (out.ok) {
      this.plan = undefined;
      const r = out.result;
      this.status = `Imported: ${r.added.length} new, ${r.replaced.length} replaced, ${out.skipped.length} skipped.`;
      this.dispatchEvent(new Event('tm-imported', { bubbles: true, composed: true }));
      return;
    }
    if (out.reason === 'invalid') {
      this.importProblems = out.problems;
      this.status = 'This file is not a Tidemark backup; nothing was imported.';
    } else if (out.reason === 'needs-choice') {
      this.plan = out.plan;
      for (const item of out.plan.items)
        if (item.status === 'clash' && !this.choices.has(item.id)) this.choices.set(item.id, 'import-as-new');
      this.status = 'Some worksheets in the file are already in the notebook. Choose for each, then import.';
    } else {
      this.status = `Nothing was imported: ${out.result.message}`;
    }
  }

  private choose(id: string, c: ClashChoice): void {
    this.choices = new Map(this.choices).set(id, c);
  }

  override render() {
    const ws = this.worksheet;
    if (!ws) return nothing;
    const clashes = this.plan?.items.filter((i) => i.status === 'clash') ?? [];
    return html`<section aria-labelledby="exports-title">
      <h2 id="exports-title">Export and backup</h2>
      <div class="grid">
        <div>
          <h3>Note for the record (preview: exactly what is copied)</h3>
          <pre tabindex="0" aria-label="Note preview">${this.noteText()}</pre>
          <div class="buttons spaced">
            <button class="primary" @click=${() => void this.copyNote()}>Copy note</button>
            <button @click=${() => print()}>Print worksheet</button>
          </div>
        </div>
        <div>
          <h3>Files</h3>
          <div class="buttons">
            <button @click=${() => this.csv()}>CSV (spreadsheet)</button>
            <button @click=${() => this.fhir()}>FHIR R4 Bundle</button>
            <button @click=${() => void this.backup(false)}>Backup this worksheet</button>
            <button @click=${() => void this.backup(true)}>Backup whole notebook</button>
          </div>
          <h3>Import a backup</h3>
          <label class="hint">A Tidemark JSON backup. Nothing is replaced unless you choose it.
            <input type="file" accept="application/json,.json" @change=${(e: Event) => void this.pickFile(e)} />
          </label>
          ${
            clashes.length
              ? html`<ul>
                  ${clashes.map(
                    (c) => html`<li>
                      “${c.label}” is already here${c.existing?.label ? ` as “${c.existing.label}”` : ''}.
                      <select aria-label="What to do with ${c.label}" .value=${this.choices.get(c.id) ?? 'import-as-new'} @change=${(e: Event) => this.choose(c.id, (e.target as HTMLSelectElement).value as ClashChoice)}>
                        <option value="import-as-new">Import as a new worksheet</option>
                        <option value="replace">Replace the one here</option>
                        <option value="skip">Skip it</option>
                      </select>
                    </li>`,
                  )}
                </ul>
                <button class="primary" @click=${() => void this.runImport()}>Import with these choices</button>`
              : nothing
          }
          ${
            this.importProblems.length
              ? html`<ul class="error" role="alert">
                ${this.importProblems.slice(0, 10).map((p) => html`<li>${p}</li>`)}
              </ul>`
              : nothing
          }
          <p class="status" role="status">${this.status}</p>
          <button @click=${() => this.dispatchEvent(new Event('tm-close', { bubbles: true, composed: true }))}>Close</button>
        </div>
      </div>
    </section>`;
  }
}

declare global {
  interface HTMLElementTagNameMap {
    'tm-exports': TmExports;
  }
}
