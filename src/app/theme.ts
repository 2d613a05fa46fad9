/**
 * Tidemark's visual language: ink on warm paper, one deep-water accent, and status shown by a
 * word and a symbol as well as a tone. Custom properties set on <tm-app> inherit into every
 * element's shadow root; elements use them with a fallback.
 */
import { css } from 'lit';

export const themeVars = css`
  :host {
    --tm-font: system-ui, 'Segoe UI', Roboto, 'Noto Sans', 'DejaVu Sans', sans-serif;
    --tm-mono: ui-monospace, 'DejaVu Sans Mono', 'Noto Sans Mono', monospace;
    --tm-paper: #f6f4ef;
    --tm-surface: #ffffff;
    --tm-ink: #1c2430;
    --tm-ink-soft: #4a5566;
    --tm-line: #c9cdd4;
    --tm-accent: #0e5a70;
    --tm-accent-ink: #ffffff;
    --tm-focus: #b35c00;
    --tm-met: #1f6b3a;
    --tm-met-bg: #e4f2e8;
    --tm-pending: #7a4b00;
    --tm-pending-bg: #fcf0d8;
    --tm-missed: #a3161d;
    --tm-missed-bg: #fbe4e4;
    --tm-muted: #5c6470;
    --tm-muted-bg: #eceef1;
    --tm-radius: 6px;
  }
`;

/** Symbols that go with each goal status (never colour alone). */
export const STATUS_SYMBOL = {
  met: '✓',
  pending: '◔',
  missed: '✕',
  'not-applicable': '–',
  'no-data': '?',
} as const;

/** Words for each goal status. */
export const STATUS_WORD = {
  met: 'Met',
  pending: 'Pending',
  missed: 'Missed',
  'not-applicable': 'Not applicable',
  'no-data': 'No data',
} as const;

/** Shared control styles for buttons and form fields. */
export const controls = css`
  button {
    font: inherit;
    min-height: 40px;
    padding: 0 14px;
    border-radius: var(--tm-radius, 6px);
    border: 1px solid var(--tm-line, #c9cdd4);
    background: var(--tm-surface, #fff);
    color: var(--tm-ink, #1c2430);
    cursor: pointer;
  }
  button.primary {
    background: var(--tm-accent, #0e5a70);
    border-color: var(--tm-accent, #0e5a70);
    color: var(--tm-accent-ink, #fff);
    font-weight: 600;
  }
  button.danger {
    border-color: var(--tm-missed, #a3161d);
    color: var(--tm-missed, #a3161d);
  }
  button:disabled {
    opacity: 0.55;
    cursor: default;
  }
  button:focus-visible,
  input:focus-visible,
  select:focus-visible,
  textarea:focus-visible,
  [tabindex]:focus-visible {
    outline: 3px solid var(--tm-focus, #b35c00);
    outline-offset: 2px;
  }
  input,
  select,
  textarea {
    font: inherit;
    min-height: 40px;
    padding: 4px 8px;
    border: 1px solid var(--tm-ink-soft, #4a5566);
    border-radius: var(--tm-radius, 6px);
    background: var(--tm-surface, #fff);
    color: var(--tm-ink, #1c2430);
    box-sizing: border-box;
  }
  .error {
    color: var(--tm-missed, #a3161d);
    font-weight: 600;
  }
  .warning {
    color: var(--tm-pending, #7a4b00);
  }
  .hint {
    color: var(--tm-ink-soft, #4a5566);
    font-size: 0.9em;
  }
  .visually-hidden {
    position: absolute;
    width: 1px;
    height: 1px;
    overflow: hidden;
    clip: rect(0 0 0 0);
    white-space: nowrap;
  }
`;
