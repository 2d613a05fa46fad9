/**
 * Lit fragments shared by the formula editors (<tm-derived-columns>, <tm-custom-goals>): a
 * field's problem with a caret under the character it points at, and the list of names a
 * formula may use. Rendering only; the checks are in formula-preview.ts.
 */
import { css, html, nothing, type TemplateResult } from 'lit';
import { caretView, type FieldProblem, type HelpGroup } from './formula-preview.js';

export const formulaStyles = css`
  .field {
    display: grid;
    gap: 4px;
    align-content: start;
  }
  .field > label {
    font-weight: 600;
  }
  .field input {
    width: 100%;
  }
  .mono,
  code,
  pre {
    font-family: var(--tm-mono, ui-monospace, monospace);
  }
  .problem:empty {
    display: none;
  }
  .problem {
    border-left: 4px solid var(--tm-missed, #a3161d);
    background: var(--tm-missed-bg, #fbe4e4);
    color: var(--tm-ink, #1c2430);
    padding: 6px 10px;
    border-radius: 0 var(--tm-radius, 6px) var(--tm-radius, 6px) 0;
  }
  .problem p {
    margin: 0;
    font-weight: 600;
    color: var(--tm-missed, #a3161d);
  }
  .problem .sym {
    font-weight: 700;
    margin-right: 4px;
  }
  pre.caret {
    margin: 0 0 4px;
    padding: 4px 6px;
    background: var(--tm-surface, #fff);
    border: 1px solid var(--tm-line, #c9cdd4);
    border-radius: 4px;
    overflow-x: auto;
    line-height: 1.25;
    font-size: 0.95rem;
    color: var(--tm-ink, #1c2430);
  }
  pre.caret mark {
    background: var(--tm-pending-bg, #fcf0d8);
    color: var(--tm-missed, #a3161d);
    font-weight: 700;
    text-decoration: underline;
  }
  pre.caret .pointer {
    color: var(--tm-missed, #a3161d);
    font-weight: 700;
  }
  details.help {
    border: 1px solid var(--tm-line, #c9cdd4);
    border-radius: var(--tm-radius, 6px);
    background: var(--tm-surface, #fff);
    padding: 0 10px;
  }
  details.help > summary {
    min-height: 40px;
    display: flex;
    align-items: center;
    cursor: pointer;
    font-weight: 600;
  }
  details.help > summary:focus-visible {
    outline: 3px solid var(--tm-focus, #b35c00);
    outline-offset: 2px;
  }
  .help-groups {
    columns: 15rem;
    column-gap: 20px;
    padding-bottom: 10px;
  }
  .help-groups section.short {
    break-inside: avoid;
  }
  .help-groups h3 {
    font-size: 0.95rem;
    margin: 8px 0 2px;
    break-after: avoid;
  }
  .help-groups ul {
    list-style: none;
    margin: 0;
    padding: 0;
    font-size: 0.88rem;
  }
  .help-groups li {
    padding: 1px 0;
    break-inside: avoid;
  }
  .help-groups code {
    font-weight: 600;
  }
  table.preview {
    justify-self: start;
    border-collapse: collapse;
    font-variant-numeric: tabular-nums;
    min-width: 16rem;
  }
  table.preview caption {
    text-align: left;
    font-weight: 600;
    padding-bottom: 4px;
  }
  table.preview th,
  table.preview td {
    text-align: left;
    padding: 3px 12px 3px 0;
    border-bottom: 1px solid var(--tm-line, #c9cdd4);
  }
  table.preview td.none {
    color: var(--tm-muted, #5c6470);
    font-style: italic;
  }
  table.preview td.yes {
    color: var(--tm-met, #1f6b3a);
    font-weight: 600;
  }
  table.preview td.no {
    color: var(--tm-ink, #1c2430);
  }
  .caution {
    font-size: 0.88rem;
    color: var(--tm-ink-soft, #4a5566);
    border-left: 3px solid var(--tm-line, #c9cdd4);
    padding-left: 8px;
    margin: 0;
  }
`;

/**
 * The problem at a field, in an always-present role=alert container (empty when there is no
 * problem or it is not to be shown yet). For a formula with a position: the formula with the
 * character marked and a caret under it (hidden from screen readers, which get the message
 * "At character N: ...").
 */
export function renderProblem(id: string, text: string, problem: FieldProblem | undefined, show: boolean): TemplateResult {
  const p = show ? problem : undefined;
  return html`<div id=${id} class="problem" role="alert">${p ? problemBody(text, p) : nothing}</div>`;
}

function problemBody(text: string, p: FieldProblem): TemplateResult {
  if (p.position === undefined || text === '') return html`<p><span class="sym" aria-hidden="true">✕</span>${p.message}</p>`;
  const v = caretView(text, p.position);
  const at = v.caret.length - 1;
  return html`<pre class="caret" aria-hidden="true">${v.line.slice(0, at)}<mark>${v.char || ' '}</mark>${v.line.slice(at + 1)}
<span class="pointer">${v.caret}</span></pre>
    <p><span class="sym" aria-hidden="true">✕</span>${p.message}</p>`;
}

/** The names and words a formula may use, in a disclosure (closed at first). */
export function renderHelp(groups: readonly HelpGroup[]): TemplateResult {
  return html`<details class="help">
    <summary>Names a formula can use</summary>
    <div class="help-groups">
      ${groups.map(
        (g) => html`<section class=${g.items.length > 12 ? 'long' : 'short'}>
          <h3>${g.title}</h3>
          <ul>
            ${g.items.map((i) => html`<li><code>${i.name}</code> ${i.meaning}</li>`)}
          </ul>
        </section>`,
      )}
    </div>
  </details>`;
}
