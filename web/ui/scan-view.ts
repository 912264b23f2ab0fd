import { html, LitElement, css, nothing } from 'lit';
import { anglesRad } from '../core/geometry/types';
import type { TruncationReport } from '../core/truncation/detect';
import type { CorrectionAdvice } from '../core/truncation/recommend';
import type { ScanMeta } from '../store/records';
import { fovSummary, geometrySummary } from './logic/describe';
import { SERIES_COLOURS, theme } from './theme';
import './geometry-form';
import './line-plot';
import './sinogram-image';

const pct = (f: number) => `${(100 * f).toFixed(0)}%`;

/**
 * One scan: its projections with the truncation marked, the edge values over the views, and
 * its geometry (editable; the form fires geometry-apply).
 */
export class ScanView extends LitElement {
  static properties = { meta: { attribute: false }, projections: { attribute: false }, report: { attribute: false }, advice: { attribute: false }, geometryError: { type: String } };
  /** The scan's description. */
  declare meta: ScanMeta;
  /** Line integrals of one detector row, [view][channel]. */
  declare projections: Float32Array | undefined;
  /** Truncation per view and side. */
  declare report: TruncationReport | undefined;
  /** The correction the report suggests. */
  declare advice: CorrectionAdvice | undefined;
  /** Why the last geometry edit was refused ('' when it was not). */
  declare geometryError: string;

  static styles = [theme, css`
    :host { display: grid; gap: 14px; }
    .top { display: grid; grid-template-columns: minmax(280px, 1fr) minmax(300px, 1.3fr); gap: 14px; align-items: start; }
    @media (max-width: 1100px) { .top { grid-template-columns: 1fr; } }
    dl { display: grid; grid-template-columns: max-content 1fr; gap: 4px 14px; margin: 0; font-size: 13px; }
    dt { color: var(--muted); }
    dd { margin: 0; }
    .facts { display: grid; gap: 12px; }
  `];

  constructor() {
    super();
    this.geometryError = '';
  }

  private angles(): number[] | undefined {
    if (!this.meta.geometry.anglesDeg) return undefined; // calibrated views only
    return Array.from(anglesRad(this.meta.geometry), (r) => (r * 180) / Math.PI);
  }

  render() {
    const m = this.meta, r = this.report;
    if (!m) return nothing;
    const views = r?.views ?? [];
    const index = views.map((v) => v.view);
    return html`
      <div class="top">
        <div class="card">
          <h2>Sinogram</h2>
          ${this.projections && r
            ? html`<rf-sinogram-image .projections=${this.projections} .channels=${m.geometry.detector.channels} .report=${r} .anglesDeg=${this.angles()}></rf-sinogram-image>`
            : html`<p class="muted">Loading…</p>`}
        </div>
        <div class="facts">
          <div class="card">
            <h2>${m.name}</h2>
            <dl>
              <dt>Geometry</dt><dd>${geometrySummary(m.geometry)}</dd>
              <dt>Measured field of view</dt><dd>radius ${fovSummary(m.geometry)}</dd>
              <dt>Water</dt><dd>${m.muWater ? `µ = ${m.muWater.toFixed(5)} /mm (images in HU)` : 'µ of water unknown (images in 1/mm)'}</dd>
              <dt>Ground truth</dt><dd>${m.hasReference ? 'stored with the scan' : 'none'}</dd>
              ${r ? html`<dt>Cut-off views</dt><dd id="truncation-summary">${pct(r.truncatedFraction)} of views (left edge ${pct(r.leftFraction)}, right edge ${pct(r.rightFraction)})</dd>
                <dt>Edge threshold</dt><dd class="num">${r.threshold.toFixed(3)} (noise σ ≈ ${r.noiseSigma.toFixed(4)})</dd>
                ${r.summary.worstSide !== 'none' ? html`<dt>Reach beyond the edges</dt><dd id="truncation-reach">left up to ${r.summary.maxExtentMm.left.toFixed(0)} mm, right up to ${r.summary.maxExtentMm.right.toFixed(0)} mm (water cylinder fits${r.muAssumed ? ', µ of water assumed' : ''})</dd>` : nothing}
                <dt>Estimated object</dt><dd id="truncation-object">${r.summary.objectDiameterMm.toFixed(0)} mm across, against a ${r.summary.fovDiameterMm.toFixed(0)} mm field of view</dd>
                <dt>Missing mass</dt><dd id="truncation-mass">${'unavailable' in r.mass ? r.mass.unavailable : html`cut-off views miss up to ${pct(r.mass.maxMissingFraction)} of the object (mean ${pct(r.mass.meanMissingFraction)}; mass consistency${r.mass.basis === 'complete-views' ? '' : ', lower bound'})`}</dd>
                ${this.advice ? html`<dt>Suggested correction</dt><dd id="truncation-advice"><strong>${this.advice.label}</strong>: ${this.advice.reason}</dd>` : nothing}` : nothing}
              ${m.source.type === 'demo' ? html`<dt>Origin</dt><dd>${m.source.description}</dd>` : html`<dt>Files</dt><dd>${m.source.fileNames.join(', ')}</dd>`}
            </dl>
            ${m.warnings.map((w) => html`<p class="warning">${w}</p>`)}
          </div>
          <div class="card">
            <h2>Edge values over the views</h2>
            ${r ? html`<rf-line-plot xLabel="view" yLabel="line integral at the edge" caption="Outermost channel of each view"
              .series=${[
                { label: 'left edge', colour: SERIES_COLOURS[0], x: index, y: views.map((v) => v.left.value) },
                { label: 'right edge', colour: SERIES_COLOURS[1], x: index, y: views.map((v) => v.right.value) },
              ]}
              .markers=${[{ y: r.threshold, label: 'cut-off threshold' }]}></rf-line-plot>` : nothing}
          </div>
        </div>
      </div>
      <div class="card">
        <h2>Geometry</h2>
        <rf-geometry-form .geometry=${m.geometry} .error=${this.geometryError}></rf-geometry-form>
      </div>`;
  }
}
customElements.define('rf-scan-view', ScanView);
