import { html, LitElement, css, nothing } from 'lit';
import type { VolumeComparison } from '../core/compare-volume';
import { writeVolumeNrrd } from '../core/formats/volume-nrrd';
import type { Volume } from '../core/volume';
import { fileName, saveFile } from './export/download';
import type { LineMark, RegionMark, Tool } from './image-viewer';
import type { PlotSeries } from './line-plot';
import type { DisplayImage } from './logic/display';
import { regionStats, sampleProfile, type Point } from './logic/measure';
import { atIndex, fromPlane, planeCount, planeImage, planeIndex, PLANES, toPlane, type Plane, type Point3 } from './logic/volume-planes';
import { INITIAL_VIEW, type ViewState } from './logic/view-transform';
import { autoWindow, type DisplayWindow } from './logic/window-level';
import { SERIES_COLOURS, theme } from './theme';
import './image-viewer';
import './line-plot';
import './region-table';
import './viewer-toolbar';
import './volume-metrics';

/** A volume the view can show: a result's, or the scan's reference. */
export interface VolumeChoice {
  key: string;
  label: string;
  /** Figures against the reference volume, when stored with the result. */
  metrics?: VolumeComparison | null;
}

const PLANE_LABELS: Record<Plane, string> = { axial: 'Axial', coronal: 'Coronal', sagittal: 'Sagittal' };
const AXIS: Record<Plane, 'z' | 'y' | 'x'> = { axial: 'z', coronal: 'y', sagittal: 'x' };

/**
 * A volume in three linked planes (axial, coronal, sagittal): the slice tool (or the sliders)
 * moves the point all three planes pass through, the crosshair shows it in each; the same
 * window presets, line profile and region tools as the 2D images; the FOV cylinder marked.
 * Volumes come through `load` (the app shell reads them from storage).
 */
export class VolumeView extends LitElement {
  static properties = {
    choices: { attribute: false }, load: { attribute: false },
    key: { state: true }, volume: { state: true }, loading: { state: true }, error: { state: true }, point: { state: true },
    window: { state: true }, tool: { state: true }, views: { state: true }, hover: { state: true }, line: { state: true },
    region: { state: true }, showFov: { state: true },
  };
  /** Volumes on offer, in list order. */
  declare choices: VolumeChoice[];
  /** Reads a volume by choice key. */
  declare load: (key: string) => Promise<Volume>;
  declare key: string;
  declare volume: Volume | undefined;
  declare loading: boolean;
  declare error: string;
  /** The point the three planes pass through, mm. */
  declare point: Point3;
  declare window: DisplayWindow | undefined;
  declare tool: Tool;
  declare views: Record<Plane, ViewState>;
  declare hover: { plane: Plane; point: Point } | null;
  declare line: { plane: Plane; mark: LineMark } | null;
  declare region: { plane: Plane; mark: RegionMark } | null;
  declare showFov: boolean;
  private planeCache = new Map<string, DisplayImage>();
  private request = 0;

  static styles = [theme, css`
    :host { display: grid; gap: 14px; margin-top: 14px; }
    .head { display: flex; gap: 12px; align-items: center; flex-wrap: wrap; margin-bottom: 10px; }
    .planes { display: grid; grid-template-columns: repeat(3, minmax(0, 1fr)); gap: 10px; }
    @media (max-width: 1000px) { .planes { grid-template-columns: 1fr; } }
    .plane h3 { margin: 0 0 4px; }
    .plane h3 span { text-transform: none; letter-spacing: 0; font-weight: 400; }
    input[type='range'] { width: 100%; margin-top: 4px; }
    .point { font-size: 12px; }
  `];

  constructor() {
    super();
    this.choices = [];
    this.key = '';
    this.volume = undefined;
    this.loading = false;
    this.error = '';
    this.point = { x: 0, y: 0, z: 0 };
    this.window = undefined;
    this.tool = 'slice';
    this.views = { axial: INITIAL_VIEW, coronal: INITIAL_VIEW, sagittal: INITIAL_VIEW };
    this.hover = null;
    this.line = null;
    this.region = null;
    this.showFov = true;
  }

  /** Shows the newest volume when one is added (a finished run), or another when the shown one goes. */
  willUpdate(changed: Map<string, unknown>) {
    if (!changed.has('choices')) return;
    const before = new Set(((changed.get('choices') as VolumeChoice[] | undefined) ?? []).map((c) => c.key));
    const added = this.choices.filter((c) => !before.has(c.key));
    const gone = !this.choices.some((c) => c.key === this.key);
    if ((added.length || gone) && this.choices.length) void this.show((added.at(-1) ?? this.choices[this.choices.length - 1]).key);
  }

  private async show(key: string) {
    const ticket = ++this.request;
    this.key = key;
    this.loading = true;
    this.error = '';
    try {
      const v = await this.load(key);
      if (ticket !== this.request) return;
      const g = v.grid;
      const inside = (c: number, centre: number, n: number, d: number) => Math.abs(c - centre) <= (n * d) / 2;
      if (!this.volume || !(inside(this.point.x, g.cx, g.nx, g.dx) && inside(this.point.y, g.cy, g.ny, g.dy) && inside(this.point.z, g.cz, g.nz, g.dz))) {
        this.point = { x: g.cx, y: g.cy, z: g.cz };
        this.views = { axial: { zoom: 1, centre: toPlane('axial', this.point) }, coronal: { zoom: 1, centre: toPlane('coronal', this.point) }, sagittal: { zoom: 1, centre: toPlane('sagittal', this.point) } };
      }
      this.planeCache.clear();
      this.volume = v;
      this.window ??= this.image('axial').unit === 'HU' ? { width: 400, level: 40 } : autoWindow(this.image('axial').values);
    } catch (err) {
      if (ticket === this.request) this.error = `The volume could not be read: ${err instanceof Error ? err.message : String(err)}`;
    } finally {
      if (ticket === this.request) this.loading = false;
    }
  }

  /** The plane through the current point (cached per slice: its FOV marks depend on the slice only). */
  private image(plane: Plane): DisplayImage {
    const v = this.volume!;
    const index = planeIndex(v.grid, plane, this.point);
    const key = `${plane}:${index}`;
    let d = this.planeCache.get(key);
    if (!d) {
      const at = atIndex(v.grid, plane, index, this.point);
      d = planeImage(v, plane, at, `${PLANE_LABELS[plane]}, ${AXIS[plane]} = ${at[AXIS[plane]].toFixed(1)} mm`);
      if (this.planeCache.size > 60) this.planeCache.clear();
      this.planeCache.set(key, d);
    }
    return d;
  }

  private setPoint(plane: Plane, q: Point) {
    this.point = fromPlane(plane, q, this.point);
  }

  private saveVolume() {
    const v = this.volume;
    const choice = this.choices.find((c) => c.key === this.key);
    if (!v || !choice) return;
    writeVolumeNrrd(v).then(
      (bytes) => saveFile(bytes as BlobPart, fileName(`${choice.label}-mu`, 'nrrd'), 'application/octet-stream'),
      (err) => (this.error = `The volume could not be saved: ${err instanceof Error ? err.message : String(err)}`),
    );
  }

  private planeView(plane: Plane) {
    const v = this.volume!;
    const img = this.image(plane);
    const index = planeIndex(v.grid, plane, this.point), n = planeCount(v.grid, plane);
    return html`<div class="plane">
      <h3>${PLANE_LABELS[plane]} <span class="num">${AXIS[plane]} = ${atIndex(v.grid, plane, index, this.point)[AXIS[plane]].toFixed(1)} mm · slice ${index + 1} of ${n}</span></h3>
      <rf-image-viewer data-plane=${plane} .image=${img} .window=${this.window!} .view=${this.views[plane]} .tool=${this.tool}
        .cursor=${this.hover?.plane === plane ? this.hover.point : null} .crosshair=${toPlane(plane, this.point)}
        .line=${this.line?.plane === plane ? this.line.mark : null} .region=${this.region?.plane === plane ? this.region.mark : null}
        .colour=${SERIES_COLOURS[PLANES.indexOf(plane)]} .showFov=${this.showFov}
        @view-change=${(e: CustomEvent) => (this.views = { ...this.views, [plane]: e.detail.view })}
        @cursor-change=${(e: CustomEvent) => (this.hover = e.detail.point ? { plane, point: e.detail.point } : null)}
        @crosshair-change=${(e: CustomEvent) => this.setPoint(plane, e.detail.point)}
        @line-change=${(e: CustomEvent) => (this.line = { plane, mark: e.detail.line })}
        @region-change=${(e: CustomEvent) => (this.region = { plane, mark: e.detail.region })}></rf-image-viewer>
      <input type="range" name=${`slice-${plane}`} aria-label=${`${PLANE_LABELS[plane]} slice`} min="0" max=${n - 1} .value=${String(index)}
        @input=${(e: Event) => (this.point = atIndex(v.grid, plane, Number((e.target as HTMLInputElement).value), this.point))}>
    </div>`;
  }

  private measurements() {
    const out = [];
    if (this.line) {
      const d = this.image(this.line.plane);
      const s = sampleProfile(d.values, d.grid, this.line.mark.p0, this.line.mark.p1);
      const series: PlotSeries[] = [{ label: d.label, colour: SERIES_COLOURS[PLANES.indexOf(this.line.plane)], x: s.distance, y: s.values }];
      out.push(html`<div class="card"><h2>Line profile</h2>
        <rf-line-plot id="volume-profile" xLabel="distance along the line (mm)" yLabel=${d.unit} caption="Values along the drawn line" .series=${series}></rf-line-plot></div>`);
    }
    if (this.region) {
      const d = this.image(this.region.plane);
      const stats = regionStats(d.values, d.grid, this.region.mark.centre, this.region.mark.radius);
      out.push(html`<div class="card"><h2>Region</h2><rf-region-table .unit=${d.unit} .radius=${this.region.mark.radius}
        .rows=${[{ label: d.label, colour: SERIES_COLOURS[PLANES.indexOf(this.region.plane)], stats }]}></rf-region-table></div>`);
    }
    return out;
  }

  render() {
    if (!this.choices.length) return nothing;
    const v = this.volume;
    const choice = this.choices.find((c) => c.key === this.key);
    const unit = v ? this.image('axial').unit : 'HU';
    const g = v?.grid;
    return html`
      <div class="card">
        <div class="head">
          <h2>Volume</h2>
          <select id="volume-choice" aria-label="Volume shown" .value=${this.key} @change=${(e: Event) => this.show((e.target as HTMLSelectElement).value)}>
            ${this.choices.map((c) => html`<option value=${c.key} ?selected=${c.key === this.key}>${c.label}</option>`)}
          </select>
          ${g ? html`<span class="muted num">${g.nx} × ${g.ny} × ${g.nz} voxels of ${g.dx.toFixed(2)} × ${g.dy.toFixed(2)} × ${g.dz.toFixed(2)} mm</span>` : nothing}
          ${this.loading ? html`<span class="muted">Reading…</span>` : nothing}
          <button class="small" id="export-volume" ?disabled=${!v} @click=${() => this.saveVolume()}>Save volume (NRRD, µ)</button>
        </div>
        ${this.error ? html`<div class="error" role="alert">${this.error}</div>` : nothing}
        ${v ? html`<rf-viewer-toolbar sliceTool .window=${this.window!} .unit=${unit} .tool=${this.tool} .showFov=${this.showFov}
          @window-change=${(e: CustomEvent) => (this.window = e.detail.window)}
          @window-auto=${() => (this.window = autoWindow(this.image('axial').values))}
          @tool-change=${(e: CustomEvent) => (this.tool = e.detail.tool)}
          @fov-toggle=${(e: CustomEvent) => (this.showFov = e.detail.show)}></rf-viewer-toolbar>
          <p class="point muted num" id="volume-point">Planes through x ${this.point.x.toFixed(1)} mm, y ${this.point.y.toFixed(1)} mm, z ${this.point.z.toFixed(1)} mm${v.fovRadius !== undefined
            ? html` · FOV cylinder (dashed): radius ${v.fovRadius.toFixed(1)} mm${v.fovHalfHeight !== undefined ? html`, half height ${v.fovHalfHeight.toFixed(1)} mm` : nothing}` : nothing}</p>` : nothing}
      </div>
      ${v ? html`<div class="planes" @window-change=${(e: CustomEvent) => (this.window = e.detail.window)}>${PLANES.map((p) => this.planeView(p))}</div>` : nothing}
      ${v ? this.measurements() : nothing}
      ${choice?.metrics ? html`<div class="card"><h2>Volume against the reference</h2><rf-volume-metrics .comparison=${choice.metrics}></rf-volume-metrics></div>` : nothing}`;
  }
}
customElements.define('rf-volume-view', VolumeView);
