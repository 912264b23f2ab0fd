import { html, LitElement, css, nothing } from 'lit';
import type { Comparison, RegionFigures } from '../core/compare';
import type { DataResidual } from '../core/data-residual';
import { theme } from './theme';

export interface MetricsRow {
  label: string;
  colour: string;
  /** The comparison, a reason it is missing, or undefined while it is computed. */
  comparison?: Comparison | string;
  /** Re-projection of the image against the measured data, when computed. */
  residual?: DataResidual | null;
  /**
   * True when the image leaves pixels undetermined (a DBP result's air fill outside the field):
   * measured rays cross them, so the residual mostly measures the fill, not the determined part.
   */
  residualCaveat?: boolean;
}

const REGIONS: Array<{ key: keyof Comparison['regions']; label: string }> = [
  { key: 'image', label: 'Whole image' },
  { key: 'insideFov', label: 'Inside the measured field' },
  { key: 'outsideFov', label: 'Outside it' },
];

const cell = (r: RegionFigures | null | undefined, k: 'rmse' | 'psnr' | 'ssim', digits: number) =>
  html`<td class="num" data-metric=${k}>${r && Number.isFinite(r[k]) ? r[k].toFixed(digits) : '–'}</td>`;

/** Cupping: the image's rim / centre ratio inside the field against the reference's (core/cupping.ts). */
const cuppingCell = (c: Comparison | undefined) => {
  const f = c?.cupping;
  return html`<td class="num" data-metric="cupping" title=${f ? `rim / centre ${f.ratio.toFixed(3)}${f.referenceRatio !== null ? `, reference ${f.referenceRatio.toFixed(3)}` : ''}` : ''}>${f ? `${f.excess >= 0 ? '+' : ''}${(100 * f.excess).toFixed(1)}%` : '–'}</td>`;
};

/** Relative residual ||A f - p|| / ||p|| on the measured channels (core/data-residual.ts). */
const residualCell = (r: DataResidual | null | undefined, caveat?: boolean) =>
  html`<td class="num" data-metric="residual" title=${caveat ? CAVEAT : ''}>${r ? `${(100 * r.relative).toFixed(1)}%` : '–'}${caveat && r ? html`<sup class="caveat">†</sup>` : nothing}</td>`;

const CAVEAT = 'The image leaves pixels undetermined (held at air) that measured rays cross: this residual mostly measures that fill, not the determined part';

/**
 * RMSE, PSNR and SSIM against the reference, over the image and inside / outside the measured
 * field of view (core/compare.ts), the cupping excess inside the field, and the residual of the
 * image re-projected onto the measured data (needs no reference).
 */
export class MetricsTable extends LitElement {
  static properties = { rows: { attribute: false }, referenceLabel: { type: String } };
  declare rows: MetricsRow[];
  /** What the images are compared with. */
  declare referenceLabel: string;

  static styles = [theme, css`
    :host { overflow-x: auto; }
    table { width: 100%; }
    table { font-size: 12px; }
    th, td { padding: 4px 5px; }
    thead th { text-align: center; }
    .dot { display: inline-block; width: 9px; height: 9px; border-radius: 50%; margin-right: 6px; vertical-align: 0; }
    td.reason { text-align: left; color: var(--muted); }
    .note { font-size: 12px; color: var(--muted); margin: 6px 0 0; }
  `];

  constructor() {
    super();
    this.rows = [];
    this.referenceLabel = '';
  }

  updated() {
    this.renderRoot.querySelectorAll<HTMLElement>('.dot').forEach((d) => { d.style.background = d.dataset.colour ?? ''; });
  }

  render() {
    if (!this.rows.length) return nothing;
    const unit = this.rows.map((r) => (typeof r.comparison === 'object' ? r.comparison.unit : undefined)).find(Boolean) ?? 'HU';
    const notes = [...new Set(this.rows.flatMap((r) => (typeof r.comparison === 'object' ? r.comparison.notes : [])))];
    return html`<table id="metrics" aria-label=${`Agreement with ${this.referenceLabel}`}>
        <thead>
          <tr><th></th>${REGIONS.map((g) => html`<th colspan="3">${g.label}</th>`)}<th>Shape</th><th>Data</th></tr>
          <tr><th>Image</th>${REGIONS.map(() => html`<th>RMSE (${unit})</th><th>PSNR (dB)</th><th>SSIM</th>`)}<th title="Rim / centre inside the field, against the reference's">Cupping</th><th title="Re-projected image against the measured line integrals">Residual</th></tr>
        </thead>
        <tbody>${this.rows.map((r) => html`<tr data-label=${r.label}>
          <td><span class="dot" data-colour=${r.colour}></span>${r.label}</td>
          ${typeof r.comparison === 'object'
            ? html`${REGIONS.map((g) => { const f = (r.comparison as Comparison).regions[g.key]; return html`${cell(f, 'rmse', 1)}${cell(f, 'psnr', 1)}${cell(f, 'ssim', 3)}`; })}${cuppingCell(r.comparison)}`
            : html`<td class="reason" colspan="10">${r.comparison ?? 'computing…'}</td>`}
          ${residualCell(r.residual, r.residualCaveat)}
        </tr>`)}</tbody>
      </table>
      <p class="note">Against ${this.referenceLabel}. PSNR uses the reference's value range; SSIM follows Wang et al. 2004 (11×11 Gaussian window). Cupping: rim / centre ratio inside the measured field relative to the reference's (0% = right shape). Residual: the image re-projected onto the measured channels against the measured data (‖Af − p‖ / ‖p‖).${this.rows.some((r) => r.residualCaveat) ? html` <span id="residual-caveat">† ${CAVEAT}.</span>` : nothing}${notes.length ? ` ${notes.join('; ')}.` : ''}</p>`;
  }
}
customElements.define('rf-metrics-table', MetricsTable);
