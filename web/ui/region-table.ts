import { html, LitElement, css, nothing } from 'lit';
import type { RegionStats } from './logic/measure';
import { theme } from './theme';

export interface RegionRow {
  label: string;
  colour: string;
  stats: RegionStats;
}

/**
 * Mean and SD inside the drawn circle, for every panel, over the pixels the image determines:
 * pixels a result leaves undetermined (DBP) are counted apart and give no figure.
 */
export class RegionTable extends LitElement {
  static properties = { rows: { attribute: false }, unit: { type: String }, radius: { type: Number } };
  declare rows: RegionRow[];
  declare unit: string;
  /** Circle radius, mm. */
  declare radius: number;

  static styles = [theme, css`
    .dot { display: inline-block; width: 9px; height: 9px; border-radius: 50%; margin-right: 6px; }
    table { width: 100%; }
    .undetermined { color: var(--muted); font-style: italic; }
  `];

  constructor() {
    super();
    this.rows = [];
    this.unit = 'HU';
    this.radius = 0;
  }

  updated() {
    this.renderRoot.querySelectorAll<HTMLElement>('.dot').forEach((d) => { d.style.background = d.dataset.colour ?? ''; });
  }

  render() {
    if (!this.rows.length) return nothing;
    const d = this.unit === 'HU' ? 1 : 5;
    return html`<table id="region-stats" aria-label="Region statistics">
      <thead><tr><th>Image (circle of radius ${this.radius.toFixed(1)} mm)</th><th>Mean (${this.unit})</th><th>SD (${this.unit})</th><th>Pixels</th></tr></thead>
      <tbody>${this.rows.map((r) => html`<tr data-label=${r.label}><td><span class="dot" data-colour=${r.colour}></span>${r.label}</td>
        ${!r.stats.pixels && r.stats.undetermined ? html`<td colspan="2" class="undetermined">not determined (no value)</td>` : html`
        <td class="num">${Number.isFinite(r.stats.mean) ? r.stats.mean.toFixed(d) : '–'}</td>
        <td class="num">${Number.isFinite(r.stats.sd) ? r.stats.sd.toFixed(d) : '–'}</td>`}
        <td class="num">${r.stats.pixels}${r.stats.undetermined ? html` <span class="undetermined">(+${r.stats.undetermined} not determined, left out)</span>` : nothing}</td></tr>`)}</tbody>
    </table>`;
  }
}
customElements.define('rf-region-table', RegionTable);
