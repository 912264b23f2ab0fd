import { html, LitElement, css, nothing } from 'lit';
import type { Comparison } from '../core/compare';
import { writeImageNrrd } from '../core/formats/image-nrrd';
import type { Image2D } from '../core/image';
import type { ResultMeta } from '../store/records';
import { fileName, saveFile } from './export/download';
import { pngBlob, pngDataUrl } from './export/png';
import { buildReport } from './export/report';
import { saveUndeterminedMask, undeterminedText } from './export/undetermined';
import type { LineMark, RegionMark, Tool } from './image-viewer';
import { convergenceHistories } from './logic/convergence';
import { difference, toDisplay, type DisplayImage } from './logic/display';
import { regionStats, sampleProfile, type Point } from './logic/measure';
import { INITIAL_VIEW, type ViewState } from './logic/view-transform';
import { autoWindow, type DisplayWindow } from './logic/window-level';
import type { MetricsRow } from './metrics-table';
import type { ImageImportState } from './result-list';
import type { ChooserItem } from './compare-chooser';
import { huScaleText, type CalibrationRegion } from './hu-calibration';
import type { ScanCalibration } from '../store/records';
import './hu-calibration';
import type { PlotSeries } from './line-plot';
import { SERIES_COLOURS, theme } from './theme';
import './image-viewer';
import './line-plot';
import './metrics-table';
import './region-table';
import './compare-chooser';
import './result-list';
import './viewer-toolbar';
import './knowledge-panel';
import './knowledge-report';
import type { SuggestedOutline } from '../core/completion/suggested-outline';
import type { ScanKnowledge } from '../store/records';
import type { KnowledgeOn } from './known-regions';
import { addPolygonPoint, EMPTY_POLYGON, type EllipseDraft, type PolygonDraft } from './logic/knowledge-draw';
import { knowledgeMarks } from './logic/knowledge-marks';
import { resultKnowledge } from './logic/result-knowledge';

/** The id that stands for the scan's ground truth as reference. */
export const TRUTH = 'truth';

/** A DICOM export in the worker, as the export area shows it. */
export interface DicomExportState extends ImageImportState {
  /** What the last export noted (e.g. values stored in coarser steps). */
  note?: string;
}

interface Panel {
  key: string;
  label: string;
  colour: string;
  display: DisplayImage;
  source: Image2D;
  meta?: ResultMeta;
}

/**
 * Results of one scan: choose up to four to compare side by side with linked window, cursor,
 * zoom, line profile and region; differences from a reference; the metrics table; convergence
 * plots; and export of the highlighted image (NRRD, PNG, DICOM) or of the whole comparison (HTML report).
 * @fires result-toggle - detail: { id }, from the list
 * @fires export-dicom - detail: { id }: the highlighted stored result as a DICOM CT series (encoded by the worker)
 * @fires result-delete - detail: { id }, from the list
 * @fires reference-change - detail: { id } ('truth' or a result id)
 * (and, from the knowledge panel: knowledge-change, knowledge-demo, knowledge-error-dismiss)
 */
export class ResultsView extends LitElement {
  static properties = {
    results: { attribute: false }, selected: { attribute: false }, images: { attribute: false }, truth: { attribute: false },
    referenceId: { type: String }, comparisons: { attribute: false }, scanName: { type: String }, scanSummary: { type: String },
    cone: { type: Boolean }, imageImport: { attribute: false }, muWater: { type: Number }, calibration: { attribute: false }, calibrating: { attribute: false },
    waitingId: { type: String }, baselineId: { type: String },
    dicomExport: { attribute: false }, scanId: { type: String }, knowledge: { attribute: false }, suggested: { attribute: false },
    knowledgeState: { attribute: false }, demo: { type: Boolean },
    showKnowledge: { state: true }, draftEllipse: { state: true }, draftPolygon: { state: true },
    window: { state: true }, diffWindow: { state: true }, view: { state: true }, cursor: { state: true }, tool: { state: true },
    line: { state: true }, region: { state: true }, showFov: { state: true }, showDifference: { state: true }, activeKey: { state: true },
    exportError: { state: true }, masks: { attribute: false }, showUndetermined: { state: true },
  };
  /** Results of the scan, oldest first. */
  declare results: ResultMeta[];
  /** Ids chosen for comparison, in order (at most four). */
  declare selected: string[];
  /** A result waiting for a place in the full comparison ('' when none). */
  declare waitingId: string;
  /** The uncorrected baseline result ('' when there is none). */
  declare baselineId: string;
  /** Loaded pixels by result id. */
  declare images: Map<string, Image2D>;
  /** Undetermined masks by result id (DBP results that keep one; 1 = not determined). */
  declare masks: Map<string, Uint8Array>;
  /** Draw the overlay over undetermined pixels (on by default). */
  declare showUndetermined: boolean;
  /** The scan's ground truth, when it has one. */
  declare truth: Image2D | undefined;
  /** 'truth', a result id, or '' for no reference. */
  declare referenceId: string;
  /** Comparisons against a result reference, by result id (text: why there is none). */
  declare comparisons: Map<string, Comparison | string>;
  declare scanName: string;
  declare scanSummary: string;
  /** The scan is cone beam (an added image is a volume). */
  declare cone: boolean;
  /** An image file being added to the scan. */
  declare imageImport: ImageImportState;
  /** The scan's mu_water (undefined: unknown) and how it was set. */
  declare muWater: number | undefined;
  declare calibration: ScanCalibration | undefined;
  /** A calibration being stored, and why the last one was refused. */
  declare calibrating: ImageImportState;
  /** A DICOM export being encoded, why the last one failed, and what it noted. */
  declare dicomExport: DicomExportState;
  declare scanId: string;
  /** What the user knows about the object (kept with the scan). */
  declare knowledge: ScanKnowledge | undefined;
  /** The outline the scan's data suggest (undefined: not known yet). */
  declare suggested: SuggestedOutline | null | undefined;
  /** A knowledge change being stored, and why the last one was refused. */
  declare knowledgeState: ImageImportState;
  /** The scan is the 2D demo (its knowledge can be shown in one click). */
  declare demo: boolean;
  declare showKnowledge: boolean;
  /** The outline ellipse and polygon being drawn. */
  declare draftEllipse: EllipseDraft | null;
  declare draftPolygon: PolygonDraft;
  declare window: DisplayWindow | undefined;
  declare diffWindow: DisplayWindow;
  declare view: ViewState;
  declare cursor: Point | null;
  declare tool: Tool;
  declare line: LineMark | null;
  declare region: RegionMark | null;
  declare showFov: boolean;
  declare showDifference: boolean;
  declare activeKey: string;
  declare exportError: string;
  private displays = new WeakMap<Image2D, DisplayImage>();
  private differences = new Map<string, { a: DisplayImage; b: DisplayImage; d: DisplayImage }>();

  static styles = [theme, css`
    :host { display: grid; grid-template-columns: 280px minmax(0, 1fr); gap: 14px; align-items: start; }
    @media (max-width: 1440px) { :host { grid-template-columns: 240px minmax(0, 1fr); } }
    @media (max-width: 1000px) { :host { grid-template-columns: 1fr; } }
    /* One column that may shrink below its content's width (a wide table scrolls inside its card). */
    .main { display: grid; grid-template-columns: minmax(0, 1fr); gap: 14px; min-width: 0; }
    .side { display: grid; gap: 14px; align-content: start; }
    .panels { display: grid; gap: 10px; }
    .panels.n1 { grid-template-columns: minmax(0, 640px); }
    .panels.n2 { grid-template-columns: repeat(2, minmax(0, 1fr)); }
    .panels.n3, .panels.n5 { grid-template-columns: repeat(3, minmax(0, 1fr)); }
    .panels.n4 { grid-template-columns: repeat(2, minmax(0, 1fr)); max-width: 1000px; }
    .exports { display: flex; gap: 8px; flex-wrap: wrap; align-items: center; }
    .empty { color: var(--muted); }
    .hint { font-size: 12px; color: var(--muted); margin: 6px 0 0; }
  `];

  constructor() {
    super();
    this.results = [];
    this.selected = [];
    this.waitingId = '';
    this.baselineId = '';
    this.images = new Map();
    this.masks = new Map();
    this.showUndetermined = true;
    this.referenceId = '';
    this.comparisons = new Map();
    this.scanName = '';
    this.scanSummary = '';
    this.cone = false;
    this.imageImport = { busy: false, error: '' };
    this.dicomExport = { busy: false, error: '' };
    this.muWater = undefined;
    this.calibration = undefined;
    this.calibrating = { busy: false, error: '' };
    this.diffWindow = { width: 500, level: 0 };
    this.view = INITIAL_VIEW;
    this.cursor = null;
    this.tool = 'window';
    this.line = null;
    this.region = null;
    this.showFov = true;
    this.showDifference = false;
    this.activeKey = '';
    this.exportError = '';
    this.scanId = '';
    this.knowledge = undefined;
    this.suggested = undefined;
    this.knowledgeState = { busy: false, error: '' };
    this.demo = false;
    this.showKnowledge = true;
    this.draftEllipse = null;
    this.draftPolygon = EMPTY_POLYGON;
  }

  private display(image: Image2D, label: string, mask?: Uint8Array): DisplayImage {
    let d = this.displays.get(image);
    if (!d || d.label !== label || d.undetermined !== mask) {
      d = toDisplay(image, label, mask);
      this.displays.set(image, d);
    }
    return d;
  }

  private referenceLabel(): string {
    if (this.referenceId === TRUTH) return 'the ground truth';
    const m = this.results.find((r) => r.id === this.referenceId);
    return m ? `"${m.name}"` : 'nothing';
  }

  /** Images shown: the chosen results, then the reference when it is not among them. */
  private panels(): Panel[] {
    const out: Panel[] = [];
    this.selected.forEach((id, k) => {
      const meta = this.results.find((r) => r.id === id);
      const img = this.images.get(id);
      if (meta && img) out.push({ key: id, label: meta.name, colour: SERIES_COLOURS[k % 4], display: this.display(img, meta.name, this.masks.get(id)), source: img, meta });
    });
    const refImg = this.referenceId === TRUTH ? this.truth : this.images.get(this.referenceId);
    if (refImg && !this.selected.includes(this.referenceId)) {
      const label = this.referenceId === TRUTH ? 'Ground truth' : this.results.find((r) => r.id === this.referenceId)?.name ?? 'reference';
      out.push({ key: this.referenceId, label, colour: SERIES_COLOURS[4], display: this.display(refImg, label, this.masks.get(this.referenceId)), source: refImg });
    }
    return out;
  }

  private reference(panels: Panel[]): Panel | undefined {
    return panels.find((p) => p.key === this.referenceId);
  }

  /** What the panels show: images, or differences from the reference. */
  private shown(panels: Panel[]): Panel[] {
    const ref = this.reference(panels);
    if (!this.showDifference || !ref) return panels;
    return panels.filter((p) => p !== ref).map((p) => {
      const key = `${p.key}|${ref.key}`;
      let c = this.differences.get(key);
      if (!c || c.a !== p.display || c.b !== ref.display) {
        c = { a: p.display, b: ref.display, d: difference(p.display, ref.display, `${p.label} − ${ref.label}`) };
        this.differences.set(key, c);
      }
      return { ...p, display: c.d };
    });
  }

  willUpdate(changed: Map<string, unknown>) {
    // A new stored outline replaces what was being drawn for it.
    const before = changed.get('knowledge') as ScanKnowledge | undefined;
    if (changed.has('knowledge') && before && JSON.stringify(before.outline) !== JSON.stringify(this.knowledge?.outline)) {
      this.draftEllipse = null;
      if (this.draftPolygon.closed) this.draftPolygon = EMPTY_POLYGON;
    }
    const panels = this.panels();
    if (!this.window && panels.length) {
      const first = panels[0].display;
      this.window = first.unit === 'HU' ? { width: 400, level: 40 } : autoWindow(first.values);
    }
    if (panels.length && !panels.some((p) => p.key === this.activeKey)) this.activeKey = panels[0].key;
  }

  private currentWindow(): DisplayWindow {
    return this.showDifference && this.reference(this.panels()) ? this.diffWindow : this.window ?? { width: 400, level: 40 };
  }

  private setWindow(w: DisplayWindow) {
    if (this.showDifference && this.reference(this.panels())) this.diffWindow = w;
    else this.window = w;
  }

  private async exportImage(kind: 'nrrd-hu' | 'nrrd-mu' | 'png' | 'mask') {
    this.exportError = '';
    const panels = this.panels();
    const shown = this.shown(panels);
    const p = shown.find((x) => x.key === this.activeKey) ?? shown[0];
    if (!p || (kind !== 'png' && shown !== panels)) return;
    try {
      if (kind === 'png') {
        saveFile(await pngBlob(p.display, this.currentWindow(), this.showUndetermined), fileName(p.display.label, 'png'), 'image/png');
        return;
      }
      if (kind === 'mask') {
        await saveUndeterminedMask(p.display);
        return;
      }
      const src = p.source;
      const image: Image2D = kind === 'nrrd-hu' ? { ...src, quantity: 'hu', data: toDisplay(src, p.label).values } : src;
      saveFile((await writeImageNrrd(image)) as BlobPart, fileName(`${p.label}-${kind === 'nrrd-hu' ? 'HU' : 'mu'}`, 'nrrd'), 'application/octet-stream');
    } catch (err) {
      this.exportError = `Export failed: ${err instanceof Error ? err.message : String(err)}`;
    }
  }

  private exportReport(panels: Panel[]) {
    const w = this.currentWindow();
    const shown = this.shown(panels);
    const svg = this.renderRoot.querySelector('rf-line-plot#profile')?.shadowRoot?.querySelector('svg')?.outerHTML;
    const html = buildReport({
      title: `Reconstructions of ${this.scanName}`,
      scanName: this.scanName,
      scanSummary: this.scanSummary,
      huScale: huScaleText(this.muWater, this.calibration),
      referenceLabel: this.referenceLabel(),
      window: w,
      unit: shown[0]?.display.unit ?? 'HU',
      createdAt: new Date(),
      profileSvg: svg,
      undeterminedDrawn: this.showUndetermined,
      profileCaption: this.line ? `From (${this.line.p0.x.toFixed(1)}, ${this.line.p0.y.toFixed(1)}) mm to (${this.line.p1.x.toFixed(1)}, ${this.line.p1.y.toFixed(1)}) mm.` : undefined,
      images: shown.map((p) => ({
        label: p.display.label,
        colour: p.colour,
        png: pngDataUrl(p.display, w, this.showUndetermined),
        undetermined: undeterminedText(p.display),
        recipe: p.meta?.recipe,
        seconds: p.meta?.seconds,
        warnings: p.meta?.warnings ?? [],
        metrics: p.meta ? this.comparisonOf(p.meta) : undefined,
        residual: p.meta?.residual,
        region: this.region ? regionStats(p.display.values, p.display.grid, this.region.centre, this.region.radius, p.display.undetermined) : undefined,
        knowledge: p.meta ? resultKnowledge(p.meta) : undefined,
      })).map((i) => ({ ...i, metrics: typeof i.metrics === 'object' ? i.metrics : undefined })),
    });
    saveFile(html, fileName(`report-${this.scanName}`, 'html'), 'text/html');
  }

  private comparisonOf(meta: ResultMeta): Comparison | string | undefined {
    if (this.referenceId === TRUTH) return meta.metrics ?? 'no comparison was stored with this result';
    if (!this.referenceId) return 'choose a reference';
    if (meta.id === this.referenceId) return 'this is the reference';
    return this.comparisons.get(meta.id);
  }

  /** The drawn region on the highlighted stored result (the ground truth cannot calibrate its own scan). */
  private calibrationRegion(active: Panel | undefined): CalibrationRegion | undefined {
    if (!active?.meta || !this.region) return undefined;
    return { resultId: active.meta.id, label: active.label, region: { cx: this.region.centre.x, cy: this.region.centre.y, radius: this.region.radius } };
  }

  /** Which compared image leaves for the waiting result (shown only while one waits). */
  private chooser() {
    const waiting = this.waitingId && this.results.find((r) => r.id === this.waitingId);
    if (!waiting) return nothing;
    const items: ChooserItem[] = this.selected.map((id, k) => ({
      id, label: this.results.find((r) => r.id === id)?.name ?? id, colour: SERIES_COLOURS[k % 4],
      role: id === this.baselineId ? 'baseline' : id === this.referenceId ? 'reference' : '',
    }));
    return html`<rf-compare-chooser .waiting=${waiting.name} .items=${items}></rf-compare-chooser>`;
  }

  /** The highlighted image as the knowledge op takes it (a stored result, or the reference). */
  private knowledgeOn(active: Panel | undefined): KnowledgeOn {
    if (active?.meta) return { resultId: active.meta.id };
    return active?.key === TRUTH ? 'reference' : undefined;
  }

  /** The knowledge panel and, for the compared results that used knowledge, what it did. */
  private knowledgeCards(compared: Panel[], active: Panel | undefined) {
    const used = compared.flatMap((p) => {
      const k = resultKnowledge(p.meta!);
      return k ? [{ label: p.label, colour: p.colour, knowledge: k }] : [];
    });
    return html`${used.length ? html`<div class="card"><h2>Knowledge used</h2><rf-knowledge-report .rows=${used}></rf-knowledge-report></div>` : nothing}
      <rf-knowledge-panel .scanId=${this.scanId} .knowledge=${this.knowledge} .region=${this.region} .ellipse=${this.draftEllipse} .polygon=${this.draftPolygon}
        .suggested=${this.suggested} .on=${this.knowledgeOn(active)} .onLabel=${active ? `“${active.label}”` : ''} .state=${this.knowledgeState} ?demo=${this.demo} .muWater=${this.muWater}
        @region-draft=${(e: CustomEvent) => (this.region = e.detail.region)}
        @ellipse-draft=${(e: CustomEvent) => (this.draftEllipse = e.detail.ellipse)}
        @polygon-draft=${(e: CustomEvent) => (this.draftPolygon = e.detail.polygon)}></rf-knowledge-panel>`;
  }

  private convergence(panels: Panel[]) {
    return panels.filter((p) => p.meta).map((p) => {
      const series: PlotSeries[] = convergenceHistories(p.meta!.report).map((hst, i) => ({
        label: hst.label, colour: SERIES_COLOURS[i % SERIES_COLOURS.length], x: hst.values.map((_, n) => n + 1), y: hst.values,
      }));
      return series.length ? html`<div class="card"><h2>Convergence: ${p.label}</h2><rf-line-plot xLabel="iteration" yLabel="value" .series=${series}></rf-line-plot></div>` : nothing;
    });
  }

  render() {
    const panels = this.panels();
    const shown = this.shown(panels);
    const w = this.currentWindow();
    const unit = shown[0]?.display.unit ?? 'HU';
    const ref = this.reference(panels);
    const compared = panels.filter((p) => p.meta && p.key !== this.referenceId);
    const metricsRows: MetricsRow[] = compared.map((p) => ({ label: p.label, colour: p.colour, comparison: this.comparisonOf(p.meta!), residual: p.meta!.residual, residualCaveat: p.display.undetermined?.some((v) => v !== 0) ?? false }));
    const profile: PlotSeries[] = this.line
      ? shown.map((p) => { const s = sampleProfile(p.display.values, p.display.grid, this.line!.p0, this.line!.p1, undefined, p.display.undetermined); return { label: p.display.label, colour: p.colour, x: s.distance, y: s.values }; })
      : [];
    const active = shown.find((p) => p.key === this.activeKey);
    const differenceShown = shown !== panels;
    const marks = this.showKnowledge ? knowledgeMarks({ knowledge: this.knowledge, suggested: this.suggested, ellipse: this.draftEllipse, polygon: this.draftPolygon }) : [];
    return html`
      <div class="side">
        <rf-result-list .results=${this.results} .selected=${this.selected} .referenceId=${this.referenceId} .hasTruth=${!!this.truth} .baselineId=${this.baselineId}
          ?cone=${this.cone} .imageImport=${this.imageImport}></rf-result-list>
        <rf-hu-calibration .muWater=${this.muWater} .calibration=${this.calibration} .regionSource=${this.calibrationRegion(active)}
          ?busy=${this.calibrating.busy} .error=${this.calibrating.error}></rf-hu-calibration>
      </div>
      <div class="main">
        ${this.chooser()}
        ${!panels.length ? html`<div class="card empty">${this.results.length ? 'Tick one to four results on the left to view and compare them.' : 'No results for this scan yet: run a recipe from the Reconstruct tab.'}</div>` : html`
        <div class="card">
          <rf-viewer-toolbar .window=${w} .unit=${unit} .tool=${this.tool} .showFov=${this.showFov} .showDifference=${this.showDifference && !!ref} .canDifference=${!!ref && panels.length > 1}
            knowledgeTools .showKnowledge=${this.showKnowledge} @knowledge-toggle=${(e: CustomEvent) => (this.showKnowledge = e.detail.show)}
            ?canUndetermined=${shown.some((p) => p.display.undetermined)} .showUndetermined=${this.showUndetermined}
            @undetermined-toggle=${(e: CustomEvent) => (this.showUndetermined = e.detail.show)}
            @window-change=${(e: CustomEvent) => this.setWindow(e.detail.window)}
            @window-auto=${() => this.setWindow(autoWindow(shown[0].display.values))}
            @tool-change=${(e: CustomEvent) => (this.tool = e.detail.tool)}
            @fov-toggle=${(e: CustomEvent) => (this.showFov = e.detail.show)}
            @difference-toggle=${(e: CustomEvent) => (this.showDifference = e.detail.show)}></rf-viewer-toolbar>
        </div>
        <div class="panels n${shown.length}"
          @window-change=${(e: CustomEvent) => this.setWindow(e.detail.window)}
          @view-change=${(e: CustomEvent) => (this.view = e.detail.view)}
          @cursor-change=${(e: CustomEvent) => (this.cursor = e.detail.point)}
          @line-change=${(e: CustomEvent) => (this.line = e.detail.line)}
          @region-change=${(e: CustomEvent) => (this.region = e.detail.region)}
          @ellipse-change=${(e: CustomEvent) => (this.draftEllipse = e.detail.ellipse)}
          @polygon-point=${(e: CustomEvent) => (this.draftPolygon = addPolygonPoint(this.draftPolygon, e.detail.point, e.detail.snap))}
          @polygon-close=${() => (this.draftPolygon = this.draftPolygon.points.length >= 3 ? { ...this.draftPolygon, closed: true } : this.draftPolygon)}>
          ${shown.map((p) => html`<rf-image-viewer data-key=${p.key} .image=${p.display} .window=${w} .view=${this.view} .cursor=${this.cursor} .tool=${this.tool}
            .line=${this.line} .region=${this.region} .colour=${p.colour} .showFov=${this.showFov} .active=${p.key === this.activeKey} .marks=${marks} .showUndetermined=${this.showUndetermined}
            @panel-focus=${() => (this.activeKey = p.key)}></rf-image-viewer>`)}
        </div>
        ${metricsRows.length ? html`<div class="card"><h2>Agreement with ${this.referenceLabel()}</h2>
          <rf-metrics-table .rows=${metricsRows} .referenceLabel=${this.referenceLabel()}></rf-metrics-table></div>` : nothing}
        ${this.line ? html`<div class="card"><h2>Line profile</h2>
          <rf-line-plot id="profile" xLabel="distance along the line (mm)" yLabel=${unit} caption="Values along the drawn line" .series=${profile}></rf-line-plot></div>` : nothing}
        ${this.region ? html`<div class="card"><h2>Region</h2>
          <rf-region-table .unit=${unit} .radius=${this.region.radius}
            .rows=${shown.map((p) => ({ label: p.display.label, colour: p.colour, stats: regionStats(p.display.values, p.display.grid, this.region!.centre, this.region!.radius, p.display.undetermined) }))}></rf-region-table></div>` : nothing}
        ${this.knowledgeCards(compared, active)}
        ${this.convergence(panels)}
        ${compared.some((p) => p.meta!.warnings.length) ? html`<div class="card"><h2>Warnings</h2>${compared.flatMap((p) => p.meta!.warnings.map((x) => html`<p class="warning">${p.label}: ${x}</p>`))}</div>` : nothing}
        <div class="card">
          <h2>Export</h2>
          <div class="exports">
            <span class="muted">Highlighted image${active ? html` (<strong>${active.display.label}</strong>)` : nothing}:</span>
            <button id="export-nrrd-hu" ?disabled=${active?.display.unit !== 'HU' || differenceShown} @click=${() => this.exportImage('nrrd-hu')}>NRRD in HU</button>
            <button id="export-nrrd-mu" ?disabled=${!active || differenceShown} @click=${() => this.exportImage('nrrd-mu')}>NRRD in µ (1/mm)</button>
            <button id="export-png" ?disabled=${!active} @click=${() => this.exportImage('png')}>PNG at this window</button>
            ${active?.display.undetermined ? html`<button id="export-undetermined" ?disabled=${differenceShown} title="The pixels this result does not determine, as an NRRD mask on its grid (1 = not determined), as the command line's --undetermined writes it"
              @click=${() => this.exportImage('mask')}>Not-determined mask (NRRD)</button>` : nothing}
            <button id="export-dicom" ?disabled=${!active?.meta?.muWater || this.dicomExport.busy}
              title=${active?.meta && !active.meta.muWater ? 'Needs the scan\'s mu_water (HU calibration)' : 'A DICOM CT series in HU, for a planning system or a PACS viewer'}
              @click=${() => this.dispatchEvent(new CustomEvent('export-dicom', { detail: { id: active!.meta!.id } }))}>${this.dicomExport.busy ? 'Encoding DICOM…' : active?.meta?.volume ? 'DICOM CT series (ZIP)' : 'DICOM CT (HU)'}</button>
            <span class="muted">All shown:</span>
            <button id="export-report" class="primary" @click=${() => this.exportReport(panels)}>Report (HTML, printable)</button>
          </div>
          <p class="hint">Click an image to highlight it. NRRD files keep full precision, with pixel spacing and the field-of-view radius in the header${differenceShown ? '; they hold images, not differences (turn the difference off to save one)' : ''}${active?.display.undetermined ? '; pixels this result does not determine hold air there, and its not-determined mask marks them' : ''}.</p>
          ${this.exportError || this.dicomExport.error ? html`<div class="error" role="alert">${this.exportError || this.dicomExport.error}</div>` : nothing}
          ${this.dicomExport.note ? html`<p class="hint" id="dicom-note">${this.dicomExport.note}</p>` : nothing}
        </div>
      `}
      </div>`;
  }
}
customElements.define('rf-results-view', ResultsView);
