/**
 * Styles of `<tm-grid>`: calm and legible at 3 a.m. Neutral slate and ink with one accent (a deep
 * sea teal), large tabular figures, rows of at least 48 px, and every status spelled out in a
 * word and a symbol, never colour alone. Contrast (WCAG 2.2 AA, measured with the WCAG relative
 * luminance formula): body ink 16.3:1 and secondary ink 7.4:1 on white, accent 7.6:1, warning
 * 6.9:1, failure 7.8:1; in the dark scheme ink 14.2:1, secondary 8.2:1, accent 8.5:1.
 *
 * Theme hooks: the `--tm-*` custom properties below may be set by the app shell.
 * No inline styles anywhere (strict CSP without 'unsafe-inline' for style attributes).
 */
import { css } from 'lit';

export const gridStyles = css`
  :host {
    --tm-paper: #f6f7f5;
    --tm-cell: #ffffff;
    --tm-ink: #17212b;
    --tm-ink-soft: #4a5763;
    --tm-line: #b9c3cb;
    --tm-line-soft: #dde3e8;
    --tm-control-line: #7b8894;
    --tm-head: #e6ebef;
    --tm-calc: #f1f4f6;
    --tm-accent: #0f5c6e;
    --tm-accent-ink: #ffffff;
    --tm-accent-tint: #e3eff2;
    --tm-warn: #8a4a00;
    --tm-warn-tint: #fff3dc;
    --tm-bad: #a01d22;
    --tm-bad-tint: #fdeaea;
    --tm-grid-max-height: 70vh;

    display: block;
    color: var(--tm-ink);
    font-family: system-ui, -apple-system, 'Segoe UI', Roboto, 'Noto Sans', sans-serif;
    font-size: 1rem;
    line-height: 1.35;
  }

  @media (prefers-color-scheme: dark) {
    :host {
      --tm-paper: #0f161c;
      --tm-cell: #141d24;
      --tm-ink: #e6ebef;
      --tm-ink-soft: #a9b6c1;
      --tm-line: #33414c;
      --tm-line-soft: #26323c;
      --tm-control-line: #8696a3;
      --tm-head: #1b252e;
      --tm-calc: #1a232b;
      --tm-accent: #6cc3d5;
      --tm-accent-ink: #0f161c;
      --tm-accent-tint: #173540;
      --tm-warn: #f0b35a;
      --tm-warn-tint: #2e2415;
      --tm-bad: #ff9a9a;
      --tm-bad-tint: #351a1c;
    }
  }

  [hidden] {
    display: none !important;
  }

  .sr {
    position: absolute;
    width: 1px;
    height: 1px;
    margin: -1px;
    padding: 0;
    overflow: hidden;
    clip: rect(0 0 0 0);
    white-space: nowrap;
    border: 0;
  }

  /* --- The scrolling grid ------------------------------------------------------------------ */
  .scroller {
    position: relative;
    overflow: auto;
    max-height: var(--tm-grid-max-height);
    background: var(--tm-paper);
    border: 1px solid var(--tm-line);
    border-radius: 8px;
    /* Keep a focused cell clear of the sticky header and time column when scrolled into view. */
    scroll-padding-top: 4rem;
    scroll-padding-left: 7rem;
  }

  /* While a message bubble shows, leave room under the last row so it is never cut off. */
  .scroller.room {
    padding-bottom: 7rem;
  }

  table {
    border-collapse: separate;
    border-spacing: 0;
    min-width: 100%;
    font-variant-numeric: tabular-nums;
  }

  th, td {
    box-sizing: border-box;
    height: 3rem;
    padding: 0.3rem 0.65rem;
    border-right: 1px solid var(--tm-line-soft);
    border-bottom: 1px solid var(--tm-line-soft);
    background: var(--tm-cell);
    text-align: right;
    vertical-align: middle;
    white-space: nowrap;
  }

  thead th {
    position: sticky;
    top: 0;
    z-index: 2;
    height: 3.5rem;
    background: var(--tm-head);
    border-bottom: 2px solid var(--tm-line);
    font-weight: 650;
    vertical-align: bottom;
  }

  thead th .short {
    display: block;
    font-size: 1rem;
  }

  thead th .unit {
    display: block;
    font-size: 0.8125rem;
    font-weight: 500;
    color: var(--tm-ink-soft);
  }

  thead th .calc-mark {
    font-style: italic;
    font-weight: 500;
    font-size: 0.8125rem;
    color: var(--tm-ink-soft);
  }

  th.time {
    position: sticky;
    left: 0;
    z-index: 1;
    text-align: left;
    min-width: 6.5rem;
    background: var(--tm-head);
    border-right: 2px solid var(--tm-line);
  }

  thead th.time {
    z-index: 3;
  }

  tbody th.time {
    font-weight: 650;
    font-size: 1.0625rem;
  }

  th.time .day {
    display: block;
    font-size: 0.8125rem;
    font-weight: 500;
    color: var(--tm-ink-soft);
  }

  td {
    position: relative;
    min-width: 5.5rem;
    font-size: 1.0625rem;
  }

  td.wide {
    min-width: 12rem;
    max-width: 22rem;
    text-align: left;
    overflow: hidden;
    text-overflow: ellipsis;
  }

  td.mark {
    text-align: center;
  }

  td.calc {
    background: var(--tm-calc);
    font-style: italic;
    color: var(--tm-ink);
  }

  .est {
    font-style: italic;
  }

  .est-mark {
    font-size: 0.75rem;
    font-style: italic;
    color: var(--tm-ink-soft);
  }

  /* Status words under a value: flagged, saving, not saved. */
  .badge {
    display: block;
    font-size: 0.8125rem;
    font-style: normal;
    font-weight: 600;
    line-height: 1.1;
  }

  .badge.flag {
    color: var(--tm-warn);
  }

  .badge.saving {
    color: var(--tm-ink-soft);
    font-weight: 500;
  }

  .badge.failed {
    color: var(--tm-bad);
  }

  td.failed {
    background: var(--tm-bad-tint);
    box-shadow: inset 0 0 0 2px var(--tm-bad);
  }

  /* Stand-ins for rows not rendered in a long worksheet; tm-grid sets each one's height. */
  tr.gap > td {
    height: 0;
    padding: 0;
    border: 0;
    background: transparent;
  }

  /* Rows picked out by the goal panel: a bar, a tint, and a marker in the row header. */
  tr.hl > th.time, tr.hl > td {
    background-image: linear-gradient(var(--tm-accent-tint), var(--tm-accent-tint));
  }

  tr.hl > th.time {
    box-shadow: inset 5px 0 0 var(--tm-accent);
  }

  .hl-mark {
    color: var(--tm-accent);
    margin-right: 0.25rem;
  }

  /* The active cell (roving tabindex) and focus. */
  [role='gridcell'], [role='rowheader'] {
    cursor: default;
  }

  .active {
    box-shadow: inset 0 0 0 2px var(--tm-accent);
  }

  [role='gridcell']:focus, [role='rowheader']:focus {
    outline: 3px solid var(--tm-accent);
    outline-offset: -3px;
  }

  td.editing, th.editing {
    padding: 0.2rem;
    overflow: visible;
    z-index: 4;
  }

  .editor {
    box-sizing: border-box;
    width: 100%;
    min-width: 6rem;
    height: 2.5rem;
    padding: 0 0.5rem;
    font: inherit;
    font-size: 1.0625rem;
    font-style: normal;
    text-align: inherit;
    color: var(--tm-ink);
    background: var(--tm-cell);
    border: 2px solid var(--tm-accent);
    border-radius: 4px;
  }

  .editor:focus {
    outline: 3px solid var(--tm-accent);
    outline-offset: 1px;
  }

  .editor[aria-invalid='true'] {
    border-color: var(--tm-bad);
    outline-color: var(--tm-bad);
  }

  /* A message bubble pinned under its cell (refusal while editing, or a brief warning). */
  .bubble {
    position: absolute;
    top: calc(100% - 2px);
    left: 0;
    z-index: 5;
    width: max-content;
    min-width: 14rem;
    max-width: 24rem;
    padding: 0.5rem 0.7rem;
    font-size: 0.9375rem;
    font-style: normal;
    font-weight: 500;
    text-align: left;
    white-space: normal;
    border-radius: 6px;
    box-shadow: 0 4px 14px rgb(0 0 0 / 0.18);
  }

  .bubble.end {
    left: auto;
    right: 0;
  }

  .bubble.error {
    color: var(--tm-bad);
    background: var(--tm-bad-tint);
    border: 2px solid var(--tm-bad);
  }

  .bubble.warn {
    color: var(--tm-warn);
    background: var(--tm-warn-tint);
    border: 2px solid var(--tm-warn);
    animation: fade-in 160ms ease-out;
  }

  @keyframes fade-in {
    from {
      opacity: 0;
    }
  }

  .empty {
    padding: 1.25rem 1rem;
    margin: 0;
    font-size: 1.0625rem;
    color: var(--tm-ink-soft);
  }

  /* --- Controls under the grid: add a row, columns, delete ------------------------------- */
  .bar {
    display: flex;
    flex-wrap: wrap;
    align-items: center;
    gap: 0.6rem 1rem;
    margin-top: 0.75rem;
  }

  .bar form {
    display: flex;
    flex-wrap: wrap;
    align-items: center;
    gap: 0.5rem;
  }

  .spacer {
    flex: 1;
  }

  button {
    font: inherit;
    min-height: 2.75rem;
    padding: 0 1rem;
    border: 1px solid var(--tm-control-line);
    border-radius: 6px;
    background: var(--tm-cell);
    color: var(--tm-ink);
    cursor: pointer;
  }

  button.primary {
    background: var(--tm-accent);
    border-color: var(--tm-accent);
    color: var(--tm-accent-ink);
    font-weight: 650;
  }

  button.danger {
    color: var(--tm-bad);
    border-color: var(--tm-bad);
    font-weight: 650;
  }

  button:disabled {
    opacity: 0.5;
    cursor: default;
  }

  button:focus-visible, .time-input:focus-visible {
    outline: 3px solid var(--tm-accent);
    outline-offset: 2px;
  }

  .time-input {
    font: inherit;
    width: 11rem;
    min-height: 2.75rem;
    padding: 0 0.6rem;
    border: 1px solid var(--tm-control-line);
    border-radius: 6px;
    background: var(--tm-cell);
    color: var(--tm-ink);
  }

  .field-error {
    flex-basis: 100%;
    margin: 0;
    color: var(--tm-bad);
    font-weight: 600;
  }

  .help {
    margin: 0.6rem 0 0;
    font-size: 0.875rem;
    color: var(--tm-ink-soft);
  }

  kbd {
    font: inherit;
    font-weight: 650;
    padding: 0 0.25rem;
    border: 1px solid var(--tm-line);
    border-radius: 4px;
    background: var(--tm-cell);
  }

  .status {
    min-height: 1.5rem;
    margin: 0.4rem 0 0;
    font-weight: 600;
  }

  .status.warn {
    color: var(--tm-warn);
  }

  .chooser {
    margin-top: 0.75rem;
    padding: 1rem;
    border: 1px solid var(--tm-line);
    border-radius: 8px;
    background: var(--tm-paper);
  }

  /* --- Dialogs (paste preview, delete confirmation) --------------------------------------- */
  dialog {
    max-width: min(46rem, calc(100vw - 2rem));
    max-height: calc(100vh - 3rem);
    padding: 1.25rem 1.5rem;
    color: var(--tm-ink);
    background: var(--tm-cell);
    border: 1px solid var(--tm-line);
    border-radius: 10px;
    box-shadow: 0 12px 40px rgb(0 0 0 / 0.3);
  }

  dialog::backdrop {
    background: rgb(15 22 28 / 0.45);
  }

  dialog h2 {
    margin: 0 0 0.5rem;
    font-size: 1.25rem;
  }

  dialog h3 {
    margin: 1rem 0 0.4rem;
    font-size: 1.0625rem;
  }

  dialog p {
    margin: 0.4rem 0;
  }

  .counts {
    display: flex;
    flex-wrap: wrap;
    gap: 0.4rem 1.5rem;
    font-weight: 650;
  }

  .counts .ok {
    color: var(--tm-accent);
  }

  .counts .no {
    color: var(--tm-bad);
  }

  .preview {
    max-height: 16rem;
    overflow: auto;
    border: 1px solid var(--tm-line-soft);
    border-radius: 6px;
  }

  .preview table {
    width: 100%;
    font-size: 0.9375rem;
  }

  .preview th, .preview td {
    height: auto;
    padding: 0.35rem 0.5rem;
    text-align: left;
    white-space: normal;
    min-width: 0;
    font-size: inherit;
  }

  .preview thead th {
    position: sticky;
    top: 0;
    height: auto;
    vertical-align: bottom;
  }

  .preview .why {
    color: var(--tm-bad);
  }

  .preview .note {
    color: var(--tm-warn);
  }

  .actions {
    display: flex;
    flex-wrap: wrap;
    justify-content: flex-end;
    gap: 0.75rem;
    margin-top: 1.25rem;
  }

  @media (prefers-reduced-motion: reduce) {
    *, *::before, *::after {
      animation: none !important;
      transition: none !important;
      scroll-behavior: auto !important;
    }
  }
`;
