import { html, LitElement, css, nothing } from 'lit';
import type { KnownKind } from '../core/knowledge/guidance';
import type { TruncationSummary } from '../core/truncation/detect';
import { guidanceView } from './logic/guidance-view';
import { theme } from './theme';

/**
 * Which method to choose for this scan: its truncation in one line, what the user has given, and
 * the guidance table with the error the accuracy bench measured inside the field of view beside
 * each choice, the truncation nearest the scan's marked (core/knowledge/guidance.ts; the README's
 * "Choosing a method" is the same table). The row for what the user has given is marked.
 */
export class MethodGuidance extends LitElement {
  static properties = { summary: { attribute: false }, given: { type: String } };
  /** The scan's truncation summary (undefined while it is analysed). */
  declare summary: TruncationSummary | undefined;
  /** What the user has given beyond the data. */
  declare given: KnownKind;

  static styles = [theme, css`
    p { font-size: 13px; margin: 0 0 6px; }
    .table-wrap { overflow-x: auto; }
    table { width: 100%; font-size: 12px; }
    th, td { text-align: left; vertical-align: top; padding: 4px 6px; }
    tr.yours td { background: var(--accent-soft); }
    tr.yours td:first-child { box-shadow: inset 3px 0 0 var(--accent); }
    code { font-size: 11.5px; overflow-wrap: anywhere; }
    .note { color: var(--muted); font-size: 12px; }
    .how { color: var(--muted); font-size: 12px; margin-top: 6px; }
    .figures + .figures { margin-top: 4px; }
    .figures:not(.nearest) { color: var(--muted); }
    .nearest .cases { font-weight: 600; }
  `];

  constructor() {
    super();
    this.summary = undefined;
    this.given = 'nothing';
  }

  render() {
    if (!this.summary) return html`<p class="muted">Reading the scan's truncation…</p>`;
    const v = guidanceView(this.summary, this.given);
    return html`<p id="guidance-scan">${v.scan}</p>
      <p id="guidance-given">${v.given}${v.choices.length ? ' The row for it is marked.' : ''}</p>
      ${v.note ? html`<p class="note" id="guidance-note">${v.note}</p>` : nothing}
      ${v.choices.length ? html`<div class="table-wrap"><table id="guidance" aria-label="Choosing a method">
        <thead><tr><th>If you know</th><th>Choose</th><th>Error inside the field (HU) [floor]</th></tr></thead>
        <tbody>${v.choices.map((c) => html`<tr class=${c.yours ? 'yours' : ''} data-knowledge=${c.knowledge}>
          <td>${c.knowledge}</td>
          <td>${c.choose}</td>
          <td>${c.figures.map((f) => html`<div class=${f.nearest ? 'figures nearest' : 'figures'} data-severity=${f.severity}>
            <span class="cases">${f.cases}${f.nearest ? ' (nearest your scan)' : ''}:</span> ${f.measured}${f.note ? html`<div class="note">${f.note}</div>` : nothing}</div>`)}</td></tr>`)}</tbody>
      </table></div>
      <p class="how">Root-mean-square error against the truth inside the measured field of view, measured by the project's accuracy bench on its own cases (real CT slices and the thorax phantom, scanned by a C-arm-like fan; the demo scan); in brackets what FBP of the complete data leaves on the same grid. Your scan's error will differ: the figures show how the choices rank.</p>` : nothing}`;
  }
}
customElements.define('rf-method-guidance', MethodGuidance);
