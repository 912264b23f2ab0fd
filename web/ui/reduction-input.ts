import { css, html, LitElement, nothing } from 'lit';
import { live } from 'lit/directives/live.js';
import type { Reduction } from '../core/reduction';
import { theme } from './theme';

/**
 * Making a scan smaller: detector binning, every k-th view, a range of detector rows. The values
 * are checked where they are used (on import, or when the recipe runs), against the scan.
 * @fires reduction-change - detail: { reduce: Reduction } (empty when nothing is reduced)
 */
export class ReductionInput extends LitElement {
  static properties = { cone: { type: Boolean }, reduce: { attribute: false }, name: { type: String } };
  /** Offer binning and rows (cone-beam scans; a single-row scan only skips views). */
  declare cone: boolean;
  /** The reduction shown. */
  declare reduce: Reduction;
  /** Prefix of the inputs' names (for labels and tests). */
  declare name: string;

  static styles = [theme, css`
    :host { display: block; }
    .row { display: flex; gap: 10px; flex-wrap: wrap; align-items: center; font-size: 13px; }
    input[type='number'] { width: 5.5em; }
    .help { font-size: 12px; color: var(--muted); margin-top: 4px; }
  `];

  constructor() {
    super();
    this.cone = true;
    this.reduce = {};
    this.name = 'reduce';
  }

  private change(next: Reduction) {
    const out: Reduction = {};
    if (next.bin && next.bin > 1) out.bin = next.bin;
    if (next.viewStep && next.viewStep > 1) out.viewStep = next.viewStep;
    if (next.rows) out.rows = next.rows;
    this.dispatchEvent(new CustomEvent('reduction-change', { detail: { reduce: out }, bubbles: true, composed: true }));
  }

  private rowsChange(i: 0 | 1, text: string) {
    const rows: [number, number] = this.reduce.rows ? [...this.reduce.rows] : [0, 0];
    // The form shows the last row kept; the reduction holds the end (one past it).
    rows[i] = Number(text) + (i === 1 ? 1 : 0);
    const rest = { ...this.reduce };
    delete rest.rows;
    this.change(text.trim() === '' ? rest : { ...this.reduce, rows });
  }

  render() {
    const r = this.reduce, n = this.name;
    return html`<div class="row">
        ${this.cone ? html`<label>Detector binning
          <select name=${`${n}-bin`} @change=${(e: Event) => this.change({ ...r, bin: Number((e.target as HTMLSelectElement).value) })}>
            ${[1, 2, 4].map((b) => html`<option value=${b} ?selected=${(r.bin ?? 1) === b}>${b === 1 ? 'none' : `${b} × ${b}`}</option>`)}
          </select></label>` : nothing}
        <label>Keep every <input type="number" name=${`${n}-view-step`} min="1" max="1000" step="1" .value=${live(String(r.viewStep ?? 1))}
          @input=${(e: Event) => this.change({ ...r, viewStep: Number((e.target as HTMLInputElement).value) || 1 })}>th view</label>
        ${this.cone ? html`<label>Rows <input type="number" name=${`${n}-row-first`} min="0" step="1" placeholder="first" .value=${live(r.rows ? String(r.rows[0]) : '')}
            @input=${(e: Event) => this.rowsChange(0, (e.target as HTMLInputElement).value)}>
          to <input type="number" name=${`${n}-row-last`} min="0" step="1" placeholder="last" .value=${live(r.rows ? String(r.rows[1] - 1) : '')}
            @input=${(e: Event) => this.rowsChange(1, (e.target as HTMLInputElement).value)}></label>` : nothing}
      </div>
      <div class="help">${this.cone ? 'Binning averages squares of detector cells; fewer cells, views and rows' : 'Fewer views'} make the scan smaller and faster to reconstruct, at the cost of resolution and coverage.</div>`;
  }
}
customElements.define('rf-reduction-input', ReductionInput);
