// Shared look: colours, type, buttons and fields. Every element adds `theme` to its styles.
import { css } from 'lit';

/** Colours of compared images (panel borders and plot lines), in panel order. */
export const SERIES_COLOURS = ['#2f6fb0', '#d9822b', '#2e9b57', '#a33ea1', '#6b7280'];

export const theme = css`
  :host {
    --bg: #f3f4f6;
    --surface: #ffffff;
    --border: #d8dce2;
    --text: #1c2430;
    --muted: #5d6877;
    --accent: #1f5f8b;
    --accent-soft: #e5eef6;
    --warn: #8a5300;
    --warn-soft: #fff4df;
    --danger: #b3261e;
    --danger-soft: #fdecea;
    --ok: #2e7d32;
    --panel: #0f1318;
    display: block;
    color: var(--text);
    font: 14px/1.45 system-ui, -apple-system, 'Segoe UI', Roboto, 'Helvetica Neue', Arial, sans-serif;
  }
  * { box-sizing: border-box; }
  h2 { font-size: 15px; font-weight: 600; margin: 0 0 8px; }
  h3 { font-size: 13px; font-weight: 600; margin: 0 0 6px; color: var(--muted); text-transform: uppercase; letter-spacing: 0.04em; }
  button {
    font: inherit; font-size: 13px; border: 1px solid var(--border); background: var(--surface); color: var(--text);
    border-radius: 6px; padding: 5px 11px; cursor: pointer;
  }
  button:hover:not(:disabled) { border-color: var(--accent); color: var(--accent); }
  button:disabled { opacity: 0.5; cursor: default; }
  button.primary { background: var(--accent); border-color: var(--accent); color: #fff; }
  button.primary:hover:not(:disabled) { background: #174a6d; color: #fff; }
  button.danger:hover:not(:disabled) { border-color: var(--danger); color: var(--danger); }
  button.small { padding: 2px 8px; font-size: 12px; }
  button[aria-pressed='true'] { background: var(--accent-soft); border-color: var(--accent); color: var(--accent); }
  input, select {
    font: inherit; font-size: 13px; border: 1px solid var(--border); border-radius: 6px; padding: 4px 7px;
    background: var(--surface); color: var(--text);
  }
  input:focus, select:focus, button:focus-visible { outline: 2px solid var(--accent-soft); border-color: var(--accent); }
  label { font-size: 13px; color: var(--muted); }
  .card { background: var(--surface); border: 1px solid var(--border); border-radius: 8px; padding: 14px 16px; }
  .muted { color: var(--muted); }
  .error { color: var(--danger); background: var(--danger-soft); border-radius: 6px; padding: 8px 10px; font-size: 13px; }
  .warning { color: var(--warn); background: var(--warn-soft); border-radius: 6px; padding: 8px 10px; font-size: 13px; }
  .num { font-variant-numeric: tabular-nums; }
  progress { -webkit-appearance: none; appearance: none; width: 100%; height: 8px; border: none; border-radius: 4px; background: var(--border); overflow: hidden; }
  progress::-webkit-progress-bar { background: var(--border); border-radius: 4px; }
  progress::-webkit-progress-value { background: var(--accent); border-radius: 4px; transition: width 0.2s; }
  progress::-moz-progress-bar { background: var(--accent); }
  table { border-collapse: collapse; font-size: 13px; }
  th, td { padding: 4px 10px; text-align: right; border-bottom: 1px solid var(--border); }
  th:first-child, td:first-child { text-align: left; }
  th { font-weight: 600; color: var(--muted); }
`;
