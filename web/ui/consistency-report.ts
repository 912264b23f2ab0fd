import { html, LitElement, css, nothing } from 'lit';
import type { ConsistencyReport } from '../core/consistency/consistency-report';
import type { ImageGrid } from '../core/image';
import type { PlotMarker, PlotSeries } from './line-plot';
import { describeRun, disagreeingRuns, residualHalfRange } from './logic/disagreement';
import type { DisplayImage } from './logic/display';
import type { DisplayWindow } from './logic/window-level';
import { theme } from './theme';
import './disagreement-map';
import './line-plot';
import './residual-sinogram';

const pct = (v: number) => `${(100 * v).toFixed(v < 0.001 ? 3 : 2)} %`;
const val = (v: number) => (Math.abs(v) >= 0.01 || v === 0 ? v.toFixed(3) : v.toExponential(2));

/**
 * A point most of whose measured rays disagree is taken for a wrong structure (a false one is
 * crossed only by disagreeing rays: disagreement-map.ts); below, the flags are scattered.
 */
const STRUCTURE_SHARE = 0.5;

function mapPeak(map: Float32Array): number {
  let m = 0;
  for (const v of map) if (v > m) m = v;
  return m;
}

/** Runs listed in words; the rest are counted. */
const LISTED_RUNS = 4;

/**
 * How far an image agrees with the scan's measured data: the consistency figure, the rays
 * that disagree and where they lie, the residual sinogram and the residual per view.
 */
export class ConsistencyReportView extends LitElement {
  static properties = {
    report: { attribute: false }, checkedGrid: { attribute: false }, anglesDeg: { attribute: false },
    image: { attribute: false }, map: { attribute: false }, window: { attribute: false }, markFlagged: { state: true },
  };
  /** The report (re-projection of the image against the measured data). */
  declare report: ConsistencyReport;
  /** Grid of the image that was re-projected. */
  declare checkedGrid: ImageGrid | undefined;
  /** View angles, degrees (absent for calibrated views). */
  declare anglesDeg: ArrayLike<number> | undefined;
  /** The checked image (display units), drawn under the disagreement map. */
  declare image: DisplayImage | undefined;
  /** Share of flagged rays through each pixel of the checked image (absent: none flagged). */
  declare map: Float32Array | undefined;
  declare window: DisplayWindow | undefined;
  declare markFlagged: boolean;
  private scale?: { residual: Float32Array; h: number };

  static styles = [theme, css`
    :host { display: grid; gap: 10px; }
    .figure { display: flex; align-items: baseline; gap: 10px; flex-wrap: wrap; }
    .big { font-size: 28px; font-weight: 650; font-variant-numeric: tabular-nums; }
    .what { color: var(--muted); font-size: 13px; }
    .verdict { border-radius: 6px; padding: 7px 10px; font-size: 13px; }
    .verdict.ok { background: #e8f4ea; color: var(--ok); }
    .verdict.scattered { background: var(--accent-soft); color: var(--accent); }
    p { margin: 0; font-size: 13px; }
    .small { font-size: 12px; color: var(--muted); }
    ul { margin: 0; padding-left: 18px; font-size: 13px; }
    label.mark { display: flex; gap: 6px; align-items: center; font-size: 12.5px; }
    label.mark input { margin: 0; }
  `];

  constructor() {
    super();
    this.checkedGrid = undefined;
    this.anglesDeg = undefined;
    this.image = undefined;
    this.map = undefined;
    this.window = undefined;
    this.markFlagged = true;
  }

  private halfRange(): number {
    const r = this.report;
    if (this.scale?.residual !== r.residual) this.scale = { residual: r.residual, h: residualHalfRange(r.residual, r.summary.threshold) };
    return this.scale.h;
  }

  private plot(): { series: PlotSeries[]; markers: PlotMarker[]; xLabel: string } {
    const p = this.report.profiles, a = this.anglesDeg;
    const x = Array.from({ length: this.report.views }, (_, v) => (a ? Number(a[v]) : v));
    const flaggedOnly = Array.from(p.viewRms, (v, i) => (p.viewFlagged[i] > 0 ? v : NaN));
    return {
      series: [
        { label: 'RMS residual of the view', colour: '#2f6fb0', x, y: p.viewRms },
        { label: 'views with rays that disagree', colour: '#d9822b', x, y: flaggedOnly },
      ],
      markers: [{ y: this.report.summary.rmsResidual, label: 'all views' }],
      xLabel: a ? 'view angle (degrees)' : 'view',
    };
  }

  /** Plain-words verdict: consistent; scattered disagreeing rays (noise outliers); or a structure the data contradict. */
  private verdict() {
    const s = this.report.summary, views = this.report.views;
    if (s.flaggedRays === 0) {
      return html`<div class="verdict ok" data-verdict="consistent">No ray disagrees beyond the threshold: the image explains the measured data to within their noise and its own pixel grid.</div>`;
    }
    const counted = html`<strong>${s.flaggedRays.toLocaleString('en')} ray${s.flaggedRays === 1 ? '' : 's'} disagree${s.flaggedRays === 1 ? 's' : ''}</strong>
      (${pct(s.flaggedFraction)} of the measured rays) in <span data-flagged-views>${s.flaggedViews}</span> of ${views} views.`;
    const peak = this.map ? mapPeak(this.map) : undefined;
    if (peak !== undefined && peak < STRUCTURE_SHARE) {
      return html`<div class="verdict scattered" data-verdict="scattered">${counted} They are scattered: no point of the image is crossed mainly by disagreeing rays
        (at most ${Math.round(100 * peak)} % of its rays), as with outliers of the noise rather than a wrong structure.</div>`;
    }
    return html`<div class="verdict warning" data-verdict="disagrees">${counted} Do not trust the structures these rays cross${peak !== undefined
      ? html`: up to ${Math.round(100 * peak)} % of the rays through a point of the image disagree (map below)` : ''}.</div>`;
  }

  render() {
    const r = this.report;
    if (!r) return nothing;
    const s = r.summary;
    const runs = disagreeingRuns(r.profiles.flagged, r.channels);
    const plot = this.plot();
    const g = this.checkedGrid;
    const bias = s.meanResidual / s.rmsMeasured;
    return html`
      <div class="figure"><span class="big" data-figure="relative-rms">${pct(s.relativeRms)}</span>
        <span class="what">difference from the measured data (RMS of re-projection − measurement, relative to the measured line integrals)</span></div>
      <p class="small num">Over ${s.rays.toLocaleString('en')} measured rays${g ? `, image re-projected on its own grid (${g.nx} × ${g.ny} pixels of ${Number(g.dx.toPrecision(4))} mm)` : ''}.
        RMS residual ${val(s.rmsResidual)}; mean ${val(s.meanResidual)} (${Math.abs(bias) < 0.005 ? 'no overall bias' : bias > 0 ? 'the image attenuates too much overall' : 'the image attenuates too little overall'}).</p>
      ${this.verdict()}
      <p class="small">A ray disagrees when its residual, averaged over ${s.averagedChannels} channel${s.averagedChannels === 1 ? '' : 's'} (the width of a small structure), exceeds
        ${s.thresholdMax > s.threshold ? `${val(s.threshold)} to ${val(s.thresholdMax)}` : val(s.threshold)}: 5 robust standard deviations of the residuals of rays with similar measured
        values (noise grows with the line integral), but never less than 0.5 % of the largest measured line integral.
        Only measured rays can be checked: a wrong structure outside the measured field of view shows only in the views whose rays cross it.</p>
      ${runs.length ? html`<div><h3>Where it disagrees</h3>
          ${this.map && this.image && this.window ? html`<rf-disagreement-map .image=${this.image} .map=${this.map} .window=${this.window}></rf-disagreement-map>` : nothing}
          ${runs[0].last - runs[0].first + 1 >= 0.9 * r.views
            ? html`<p class="small">Rays disagree in ${runs[0].first === 0 && runs[0].last === r.views - 1 ? 'every view' : 'almost every view'}, as a structure inside the measured field of view makes them${this.map ? ' (the map above shows where)' : ''}.</p>` : nothing}
          <ul class="num" id="disagreement-runs">
          ${runs.slice(0, LISTED_RUNS).map((run) => html`<li>${describeRun(run, this.anglesDeg)}</li>`)}
          ${runs.length > LISTED_RUNS ? html`<li>and ${runs.length - LISTED_RUNS} smaller group${runs.length - LISTED_RUNS === 1 ? '' : 's'} of views</li>` : nothing}</ul></div>` : nothing}
      <div><h3>Residual sinogram</h3>
        <rf-residual-sinogram .residual=${r.residual} .flagged=${r.profiles.flagged} .channels=${r.channels} .halfRange=${this.halfRange()}
          .anglesDeg=${this.anglesDeg} .markFlagged=${this.markFlagged}></rf-residual-sinogram>
        <label class="mark"><input type="checkbox" .checked=${this.markFlagged} @change=${(e: Event) => (this.markFlagged = (e.target as HTMLInputElement).checked)}>Mark the rays that disagree</label></div>
      <div><h3>Residual per view</h3>
        <rf-line-plot .series=${plot.series} .markers=${plot.markers} xLabel=${plot.xLabel} yLabel="RMS residual (line integral)"
          caption="RMS residual of each view, views with disagreeing rays highlighted"></rf-line-plot></div>
      ${r.warnings.map((w) => html`<p class="warning">${w}</p>`)}`;
  }
}
customElements.define('rf-consistency-report', ConsistencyReportView);
