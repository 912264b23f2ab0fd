import { html, LitElement, css, nothing } from 'lit';
import type { ConsistencyReport } from '../core/consistency/consistency-report';
import type { ImageGrid } from '../core/image';
import type { ResultMeta } from '../store/records';
import type { LineMark, RegionMark, Tool } from './image-viewer';
import type { PlotSeries } from './line-plot';
import { difference, type DisplayImage } from './logic/display';
import { regionStats, sampleProfile, type Point } from './logic/measure';
import { INITIAL_VIEW, type ViewState } from './logic/view-transform';
import { autoWindow, type DisplayWindow } from './logic/window-level';
import { SERIES_COLOURS, theme } from './theme';
import './consistency-report';
import './image-viewer';
import './line-plot';
import './region-table';
import './viewer-toolbar';

/** One side of a run: a stored image and its consistency report. */
export interface RunSide {
  meta: ResultMeta;
  display: DisplayImage;
  report?: ConsistencyReport;
  checkedGrid?: ImageGrid;
  map?: Float32Array;
}

/** A prior check: the prior (a network's output, a stored result or an image file) and, when the step ran, the data-consistent result. */
export interface ShownRun {
  prior: RunSide;
  consistent?: RunSide;
  /** Why there is no data-consistent result. */
  consistentMissing: string;
}

const COLOURS = { prior: SERIES_COLOURS[0], consistent: SERIES_COLOURS[2] };

/** How a checked prior is named: a network's output, or a prior image. */
export function priorTitle(meta: ResultMeta): string {
  return meta.recipe.method === 'network' ? 'Network output' : 'Prior image';
}

/**
 * A prior check side by side: the prior and the data-consistent result with
 * linked window, zoom, cursor, line profile and region; the difference the data made; and the
 * consistency report of each against the measured data.
 */
export class PriorRunView extends LitElement {
  static properties = {
    run: { attribute: false }, anglesDeg: { attribute: false },
    window: { state: true }, view: { state: true }, cursor: { state: true }, tool: { state: true }, line: { state: true },
    region: { state: true }, showFov: { state: true }, showDifference: { state: true },
  };
  /** The run shown. */
  declare run: ShownRun;
  /** View angles of the scan, degrees (absent for calibrated views). */
  declare anglesDeg: ArrayLike<number> | undefined;
  declare window: DisplayWindow | undefined;
  declare view: ViewState;
  declare cursor: Point | null;
  declare tool: Tool;
  declare line: LineMark | null;
  declare region: RegionMark | null;
  declare showFov: boolean;
  declare showDifference: boolean;
  private diff?: { a: DisplayImage; b: DisplayImage; d: DisplayImage };
  private diffWindow: DisplayWindow = { width: 500, level: 0 };

  static styles = [theme, css`
    :host { display: grid; gap: 14px; }
    .pair { display: grid; grid-template-columns: repeat(2, minmax(0, 1fr)); gap: 14px; align-items: start; }
    @media (max-width: 1000px) { .pair { grid-template-columns: 1fr; } }
    .side h2 { display: flex; gap: 8px; align-items: center; }
    .dot { width: 10px; height: 10px; border-radius: 50%; display: inline-block; }
    .sub { font-size: 12px; color: var(--muted); margin: -4px 0 8px; }
    .placeholder { color: var(--muted); font-size: 13px; }
  `];

  constructor() {
    super();
    this.anglesDeg = undefined;
    this.window = undefined;
    this.view = INITIAL_VIEW;
    this.cursor = null;
    this.tool = 'window';
    this.line = null;
    this.region = null;
    this.showFov = true;
    this.showDifference = false;
  }

  willUpdate(changed: Map<string, unknown>) {
    if (!this.window && this.run) this.window = this.run.prior.display.unit === 'HU' ? { width: 400, level: 40 } : autoWindow(this.run.prior.display.values);
    if (changed.has('run') && !this.run?.consistent) this.showDifference = false;
  }

  updated() {
    // Colours go through the CSSOM: the page's policy forbids inline style attributes.
    this.renderRoot.querySelectorAll<HTMLElement>('.dot').forEach((d) => { d.style.background = d.dataset.colour ?? ''; });
  }

  /** What the right panel shows: the data-consistent result, or its difference from the prior. */
  private right(): DisplayImage | undefined {
    const c = this.run.consistent?.display;
    if (!c || !this.showDifference) return c;
    const a = c, b = this.run.prior.display;
    if (!this.diff || this.diff.a !== a || this.diff.b !== b) this.diff = { a, b, d: difference(a, b, `Data-consistent − ${priorTitle(this.run.prior.meta).toLowerCase()}`) };
    return this.diff.d;
  }

  private panelWindow(differenceShown: boolean): DisplayWindow {
    return differenceShown ? this.diffWindow : this.window ?? { width: 400, level: 40 };
  }

  private viewer(key: string, image: DisplayImage, colour: string, w: DisplayWindow) {
    return html`<rf-image-viewer data-key=${key} .image=${image} .window=${w} .view=${this.view} .cursor=${this.cursor} .tool=${this.tool}
      .line=${this.line} .region=${this.region} .colour=${colour} .showFov=${this.showFov} .active=${false}
      @window-change=${(e: CustomEvent) => {
        e.stopPropagation();
        if (key === 'difference') this.diffWindow = e.detail.window;
        else this.window = e.detail.window;
        this.requestUpdate();
      }}></rf-image-viewer>`;
  }

  private measurements(shown: Array<{ label: string; colour: string; image: DisplayImage }>) {
    const unit = shown[0].image.unit;
    const profile: PlotSeries[] = this.line
      ? shown.map((p) => { const s = sampleProfile(p.image.values, p.image.grid, this.line!.p0, this.line!.p1); return { label: p.label, colour: p.colour, x: s.distance, y: s.values }; })
      : [];
    return html`
      ${this.line ? html`<div class="card"><h2>Line profile</h2>
        <rf-line-plot id="prior-profile" xLabel="distance along the line (mm)" yLabel=${unit} caption="Values along the drawn line" .series=${profile}></rf-line-plot></div>` : nothing}
      ${this.region ? html`<div class="card"><h2>Region</h2>
        <rf-region-table .unit=${unit} .radius=${this.region.radius}
          .rows=${shown.map((p) => ({ label: p.label, colour: p.colour, stats: regionStats(p.image.values, p.image.grid, this.region!.centre, this.region!.radius) }))}></rf-region-table></div>` : nothing}`;
  }

  private report(side: RunSide | undefined, id: string, title: string, colour: string, missing: string) {
    return html`<div class="card side" id=${id}>
      <h2><span class="dot" data-colour=${colour}></span>${title}: agreement with the measured data</h2>
      ${!side ? html`<p class="placeholder">${missing}</p>`
        : side.report ? html`<rf-consistency-report .report=${side.report} .checkedGrid=${side.checkedGrid} .anglesDeg=${this.anglesDeg}
            .image=${side.display} .map=${side.map} .window=${this.window}></rf-consistency-report>`
        : html`<p class="placeholder">No consistency report is stored with this result.</p>`}
      ${side?.meta.warnings.map((w) => html`<p class="warning">${w}</p>`) ?? nothing}
    </div>`;
  }

  render() {
    const r = this.run;
    if (!r) return nothing;
    const right = this.right();
    const differenceShown = this.showDifference && !!right;
    const toolbarWindow = this.window ?? { width: 400, level: 40 };
    const shown = [{ label: r.prior.meta.name, colour: COLOURS.prior, image: r.prior.display }];
    if (right) shown.push({ label: right.label, colour: COLOURS.consistent, image: right });
    const title = priorTitle(r.prior.meta);
    const g = (d: DisplayImage) => `${d.grid.nx} × ${d.grid.ny} pixels of ${Number(d.grid.dx.toPrecision(4))} mm`;
    return html`
      <div class="card">
        <rf-viewer-toolbar .window=${toolbarWindow} .unit=${r.prior.display.unit} .tool=${this.tool} .showFov=${this.showFov}
          .showDifference=${differenceShown} .canDifference=${!!r.consistent}
          @window-change=${(e: CustomEvent) => (this.window = e.detail.window)}
          @window-auto=${() => (this.window = autoWindow(r.prior.display.values))}
          @tool-change=${(e: CustomEvent) => (this.tool = e.detail.tool)}
          @fov-toggle=${(e: CustomEvent) => (this.showFov = e.detail.show)}
          @difference-toggle=${(e: CustomEvent) => (this.showDifference = e.detail.show)}></rf-viewer-toolbar>
      </div>
      <div class="pair"
        @view-change=${(e: CustomEvent) => (this.view = e.detail.view)}
        @cursor-change=${(e: CustomEvent) => (this.cursor = e.detail.point)}
        @line-change=${(e: CustomEvent) => (this.line = e.detail.line)}
        @region-change=${(e: CustomEvent) => (this.region = e.detail.region)}>
        <div class="card side" id="prior-side"><h2><span class="dot" data-colour=${COLOURS.prior}></span>${title}</h2>
          <p class="sub">${g(r.prior.display)} · ${r.prior.meta.seconds.toFixed(1)} s</p>
          ${this.viewer('prior', r.prior.display, COLOURS.prior, toolbarWindow)}</div>
        <div class="card side" id="consistent-side"><h2><span class="dot" data-colour=${COLOURS.consistent}></span>${differenceShown ? 'What the data changed' : 'Data-consistent result'}</h2>
          ${r.consistent && right
            ? html`<p class="sub">${differenceShown ? `data-consistent result − ${title.toLowerCase()} · ` : ''}${g(right)} · ${r.consistent.meta.seconds.toFixed(1)} s</p>
                ${this.viewer(differenceShown ? 'difference' : 'consistent', right, COLOURS.consistent, this.panelWindow(differenceShown))}`
            : html`<p class="placeholder">${r.consistentMissing}</p>`}</div>
      </div>
      ${this.measurements(shown)}
      <div class="pair">
        ${this.report(r.prior, 'prior-report', title, COLOURS.prior, '')}
        ${this.report(r.consistent, 'consistent-report', 'Data-consistent result', COLOURS.consistent, r.consistentMissing)}
      </div>`;
  }
}
customElements.define('rf-prior-run-view', PriorRunView);
