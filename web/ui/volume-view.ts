import { html, LitElement, css, nothing } from 'lit';
import type { VolumeComparison } from '../core/compare-volume';
import type { VolumeInfo } from '../core/volume-sink';
import { fileName, saveFile } from './export/download';
import type { LineMark, RegionMark, Tool } from './image-viewer';
import type { PlotSeries } from './line-plot';
import type { DisplayImage } from './logic/display';
import { regionStats, sampleProfile, type Point } from './logic/measure';
import { atIndex, fromPlane, planeCount, planeImageOf, planeIndex, PLANES, toPlane, type Plane, type Point3 } from './logic/volume-planes';
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
  /** Its description (grid, FOV, mu_water), as stored. */
  info: VolumeInfo;
  /** Figures against the reference volume, when stored with the result. */
  metrics?: VolumeComparison | null;
}

/** How the view reads what it shows: one plane at a time, and the whole volume as a file to save. */
export interface VolumePlanes {
  plane(key: string, plane: Plane, index: number): Promise<Float32Array>;
  file(key: string): Promise<Blob>;
}

const PLANE_LABELS: Record<Plane, string> = { axial: 'Axial', coronal: 'Coronal', sagittal: 'Sagittal' };
const AXIS: Record<Plane, 'z' | 'y' | 'x'> = { axial: 'z', coronal: 'y', sagittal: 'x' };

/**
 * A volume in three linked planes (axial, coronal, sagittal): the slice tool (or the sliders)
 * moves the point all three planes pass through, the crosshair shows it in each; the same
 * window presets, line profile and region tools as the 2D images; the FOV cylinder marked.
 * Planes come through `planes` one at a time (the engine's coordinator reads them from the stored
 * slabs), so the page never holds a volume.
 */
export class VolumeView extends LitElement {
  static properties = {
    choices: { attribute: false }, planes: { attribute: false },
    key: { state: true }, volume: { state: true }, loading: { state: true }, error: { state: true }, point: { state: true },
    window: { state: true }, tool: { state: true }, views: { state: true }, hover: { state: true }, line: { state: true },
    region: { state: true }, showFov: { state: true },
  };
  /** Volumes on offer, in list order. */
  declare choices: VolumeChoice[];
  /** Reads planes and files by choice key. */
  declare planes: VolumePlanes;
  declare key: string;
  /** The volume shown: its description (its voxels stay in storage). */
  declare volume: VolumeInfo | undefined;
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
  private lastShown: Partial<Record<Plane, DisplayImage>> = {};
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
    const choice = this.choices.find((c) => c.key === key);
    if (!choice) return;
    ++this.request;
    this.key = key;
    this.error = '';
    const g = choice.info.grid;
    const inside = (c: number, centre: number, n: number, d: number) => Math.abs(c - centre) <= (n * d) / 2;
    if (!this.volume || !(inside(this.point.x, g.cx, g.nx, g.dx) && inside(this.point.y, g.cy, g.ny, g.dy) && inside(this.point.z, g.cz, g.nz, g.dz))) {
      this.point = { x: g.cx, y: g.cy, z: g.cz };
      this.views = { axial: { zoom: 1, centre: toPlane('axial', this.point) }, coronal: { zoom: 1, centre: toPlane('coronal', this.point) }, sagittal: { zoom: 1, centre: toPlane('sagittal', this.point) } };
    }
    this.planeCache.clear();
    this.lastShown = {};
    this.volume = choice.info;
  }

  /** Reads the planes through the current point that are not cached yet. */
  updated(changed: Map<string, unknown>) {
    if (changed.has('volume') || changed.has('point')) void this.readPlanes();
  }

  private async readPlanes() {
    const v = this.volume;
    if (!v) return;
    const ticket = this.request, key = this.key, point = this.point;
    const missing = PLANES.filter((p) => !this.planeCache.has(this.cacheKey(p, planeIndex(v.grid, p, point))));
    if (!missing.length) return;
    this.loading = true;
    try {
      for (const plane of missing) {
        const index = planeIndex(v.grid, plane, point);
        const values = await this.planes.plane(key, plane, index);
        if (ticket !== this.request) return;
        const at = atIndex(v.grid, plane, index, point);
        if (this.planeCache.size > 60) this.planeCache.clear();
        this.planeCache.set(this.cacheKey(plane, index), planeImageOf(v, plane, values, at, `${PLANE_LABELS[plane]}, ${AXIS[plane]} = ${at[AXIS[plane]].toFixed(1)} mm`));
      }
      const axial = this.image('axial');
      if (axial) this.window ??= axial.unit === 'HU' ? { width: 400, level: 40 } : autoWindow(axial.values);
      this.requestUpdate();
    } catch (err) {
      if (ticket === this.request) this.error = `The volume could not be read: ${err instanceof Error ? err.message : String(err)}`;
    } finally {
      if (ticket === this.request) this.loading = false;
    }
  }

  private cacheKey(plane: Plane, index: number): string {
    return `${this.key}:${plane}:${index}`;
  }

  /**
   * The plane through the current point once read (cached per slice: its FOV marks depend on the
   * slice only); until then the plane shown last, so the view does not flicker while it reads.
   */
  private image(plane: Plane): DisplayImage | undefined {
    const v = this.volume!;
    const d = this.planeCache.get(this.cacheKey(plane, planeIndex(v.grid, plane, this.point)));
    if (d) this.lastShown[plane] = d;
    return d ?? this.lastShown[plane];
  }

  private setPoint(plane: Plane, q: Point) {
    this.point = fromPlane(plane, q, this.point);
  }

  private saveVolume() {
    const choice = this.choices.find((c) => c.key === this.key);
    if (!choice) return;
    this.planes.file(choice.key).then(
      (blob) => saveFile(blob, fileName(`${choice.label}-mu`, 'nrrd'), 'application/octet-stream'),
      (err) => (this.error = `The volume could not be saved: ${err instanceof Error ? err.message : String(err)}`),
    );
  }

  private planeView(plane: Plane) {
    const v = this.volume!;
    const img = this.image(plane);
    if (!img || !this.window) return html`<div class="plane"><h3>${PLANE_LABELS[plane]}</h3><p class="muted">Reading the plane…</p></div>`;
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
    const line = this.line && this.image(this.line.plane);
    if (this.line && line) {
      const d = line;
      const s = sampleProfile(d.values, d.grid, this.line.mark.p0, this.line.mark.p1);
      const series: PlotSeries[] = [{ label: d.label, colour: SERIES_COLOURS[PLANES.indexOf(this.line.plane)], x: s.distance, y: s.values }];
      out.push(html`<div class="card"><h2>Line profile</h2>
        <rf-line-plot id="volume-profile" xLabel="distance along the line (mm)" yLabel=${d.unit} caption="Values along the drawn line" .series=${series}></rf-line-plot></div>`);
    }
    const region = this.region && this.image(this.region.plane);
    if (this.region && region) {
      const d = region;
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
    const axial = v ? this.image('axial') : undefined;
    const unit = axial?.unit ?? 'HU';
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
        ${v && axial && this.window ? html`<rf-viewer-toolbar sliceTool .window=${this.window} .unit=${unit} .tool=${this.tool} .showFov=${this.showFov}
          @window-change=${(e: CustomEvent) => (this.window = e.detail.window)}
          @window-auto=${() => (this.window = autoWindow(axial.values))}
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
