import { html, LitElement, css, nothing } from 'lit';
import { InputError } from '../core/errors';
import type { Comparison } from '../core/compare';
import type { Image2D, ImageGrid } from '../core/image';
import type { TruncationReport } from '../core/truncation/detect';
import type { CorrectionAdvice } from '../core/truncation/recommend';
import type { SuggestedOutline } from '../core/completion/suggested-outline';
import { knowledgeOf, recipeKnowledgeOf } from '../store/knowledge';
import type { KnowledgeRequest } from '../worker/app-protocol';
import { demoRuns } from './logic/demo-runs';
import { knowledgeKind } from './logic/recipe-knowledge';
import './method-guidance';
import { requestPersistence, StorageFullError, storageUse, type StorageUse } from '../store/quota';
import type { ResultMeta, ScanMeta } from '../store/records';
import { listResults, loadResultImage } from '../store/results';
import { listScans } from '../store/scans';
import { loadSettings } from '../store/settings';
import type { EngineInfo } from '../worker/app-protocol';
import type { EngineClient } from '../worker/client';
import type { Reduction } from '../core/reduction';
import { scanSummary } from './logic/describe';
import { defaultGridText } from './logic/scan-defaults';
import { baselineOf, offer, replace, withdraw } from './logic/compare-set';
import type { ImageImportState } from './result-list';
import { TRUTH, type DicomExportState } from './results-view';
import { fileName, saveFile } from './export/download';
import { QueueKeeper } from './queue-keeper';
import { theme } from './theme';
import './caution-banner';
import './prior-workbench';
import './recipe-form';
import './results-view';
import './run-queue';
import './scan-library';
import './scan-view';
import './volume-view';
import { volumeChoices, volumePlanes } from './volume-choices';

type Tab = 'scan' | 'reconstruct' | 'images' | 'prior';

interface LoadedScan {
  id: string;
  /** The analysed detector row (the one nearest the orbit plane for cone beams), [view][channel]. */
  projections: Float32Array;
  report: TruncationReport;
  /** The correction the report suggests (the recipe form starts with it). */
  advice: CorrectionAdvice;
  /** The grid a recipe without one gets, in words. */
  gridText: string;
  truth?: Image2D;
  referenceGrid?: ImageGrid;
  /** The outline the views' edges suggest (drawn over the images for the user to correct). */
  suggested: SuggestedOutline | null;
}

const message = (err: unknown) => (err instanceof Error ? err.message : String(err));

/**
 * The workbench: owns the page's state, reads the library from IndexedDB and sends heavy work
 * to the engine through the client; the elements below it only show and report.
 */
export class AppShell extends LitElement {
  static properties = {
    client: { attribute: false },
    scans: { state: true }, results: { state: true }, selectedScanId: { state: true }, loaded: { state: true }, tab: { state: true },
    compareIds: { state: true }, waitingId: { state: true }, images: { state: true }, masks: { state: true }, referenceId: { state: true }, comparisons: { state: true },
    importing: { state: true }, importError: { state: true }, importFraction: { state: true }, importReduce: { state: true }, memoryBudgetGb: { state: true }, imageImport: { state: true }, calibrating: { state: true }, knowledgeState: { state: true }, dicomExport: { state: true }, demoBusy: { state: true }, demoFraction: { state: true }, coneDemoBusy: { state: true }, coneDemoFraction: { state: true },
    storage: { state: true }, engine: { state: true }, alert: { state: true }, geometryError: { state: true }, ready: { state: true },
  };
  /** The engine facade (set by main.ts). */
  declare client: EngineClient;
  declare scans: ScanMeta[];
  declare results: ResultMeta[];
  declare selectedScanId: string;
  declare loaded: LoadedScan | undefined;
  declare tab: Tab;
  declare compareIds: string[];
  /** A result waiting for a place in the full comparison ('' when none): the user chooses which image leaves. */
  declare waitingId: string;
  declare images: Map<string, Image2D>;
  /** Undetermined masks of the loaded results that keep one (DBP), by result id. */
  declare masks: Map<string, Uint8Array>;
  declare referenceId: string;
  declare comparisons: Map<string, Comparison | string>;
  declare importing: boolean;
  /** How far the running import got, and the reduction the next import applies. */
  declare importFraction: number;
  declare importReduce: Reduction;
  /** The memory budget of runs, GB ('' : what the browser reports). */
  declare memoryBudgetGb: string;
  private importController?: AbortController;
  declare importError: string;
  /** An image file being added to the chosen scan (Images tab). */
  declare imageImport: ImageImportState;
  /** A HU calibration of the chosen scan being stored (Images tab). */
  declare calibrating: ImageImportState;
  /** A change of the chosen scan's knowledge being stored (Images tab). */
  declare knowledgeState: ImageImportState;
  declare dicomExport: DicomExportState;
  declare demoBusy: boolean;
  declare demoFraction: number;
  declare coneDemoBusy: boolean;
  declare coneDemoFraction: number;
  declare storage: StorageUse;
  declare engine: EngineInfo | undefined;
  declare alert: string;
  declare geometryError: string;
  declare ready: boolean;
  /** The reconstruction queue (stored, so a reload loses no job). */
  private readonly queue = new QueueKeeper(this, () => this.client, {
    done: (result) => this.act('The finished run could not be shown', () => this.jobDone(result)),
    ended: () => this.act('Storage use could not be read', () => this.storageUseRefresh()),
    problem: (text) => { this.alert = text; },
  }, () => this.budgetBytes());

  static styles = [theme, css`
    :host { min-height: 100vh; background: var(--bg); display: flex; flex-direction: column; }
    header { display: flex; align-items: center; gap: 14px; padding: 10px 18px; background: #17212c; color: #e9eef3; }
    .brand { font-size: 18px; font-weight: 700; letter-spacing: 0.02em; }
    .tagline { color: #a9b6c4; font-size: 13px; }
    .engine { margin-left: auto; font-size: 12px; color: #a9b6c4; }
    .body { display: grid; grid-template-columns: 300px minmax(0, 1fr); gap: 16px; padding: 16px 18px; align-items: start; flex: 1; }
    @media (max-width: 1440px) { .body { grid-template-columns: 260px minmax(0, 1fr); } }
    @media (max-width: 900px) { .body { grid-template-columns: 1fr; } }
    /* A grid item is as wide as its content unless told otherwise: keep wide tables inside the screen. */
    main { min-width: 0; }
    nav { display: flex; gap: 2px; border-bottom: 1px solid var(--border); margin-bottom: 14px; }
    nav button { border: none; border-bottom: 2px solid transparent; border-radius: 0; background: none; padding: 8px 14px; font-size: 14px; color: var(--muted); }
    nav button[aria-selected='true'] { color: var(--accent); border-bottom-color: var(--accent); font-weight: 600; }
    nav button:hover:not(:disabled) { color: var(--accent); border-bottom-color: var(--accent-soft); }
    .badge { display: inline-block; min-width: 18px; padding: 0 5px; border-radius: 9px; background: var(--accent); color: #fff; font-size: 11px; margin-left: 5px; }
    .reconstruct { display: grid; grid-template-columns: minmax(0, 1.4fr) minmax(300px, 1fr); gap: 14px; align-items: start; }
    .side-cards { display: grid; gap: 14px; min-width: 0; }
    @media (max-width: 1100px) { .reconstruct { grid-template-columns: 1fr; } }
    .alert { margin: 12px 18px 0; display: flex; justify-content: space-between; gap: 10px; align-items: flex-start; }
    .placeholder { color: var(--muted); }
    section[hidden] { display: none; }
  `];

  constructor() {
    super();
    this.scans = [];
    this.results = [];
    this.selectedScanId = '';
    this.loaded = undefined;
    this.tab = 'scan';
    this.compareIds = [];
    this.waitingId = '';
    this.images = new Map();
    this.masks = new Map();
    this.referenceId = '';
    this.comparisons = new Map();
    this.importing = false;
    this.importFraction = 0;
    this.importReduce = {};
    this.memoryBudgetGb = '';
    this.importError = '';
    this.imageImport = { busy: false, error: '' };
    this.dicomExport = { busy: false, error: '' };
    this.calibrating = { busy: false, error: '' };
    this.knowledgeState = { busy: false, error: '' };
    this.demoBusy = false;
    this.demoFraction = 0;
    this.coneDemoBusy = false;
    this.coneDemoFraction = 0;
    this.storage = {};
    this.engine = undefined;
    this.alert = '';
    this.geometryError = '';
    this.ready = false;
  }

  async firstUpdated() {
    try {
      await this.refreshLibrary();
      await this.queue.load();
      const settings = await loadSettings();
      if (!this.scans.length && !settings.demoCreated) await this.createDemo();
      if (!this.selectedScanId && this.scans.length) await this.selectScan(this.scans[0].id);
    } catch (err) {
      this.alert = `The library could not be read: ${message(err)}`;
    }
    this.ready = true;
    this.client.info().then((info) => (this.engine = info), (err) => (this.alert = `The engine did not start: ${message(err)}`));
  }

  private async refreshLibrary() {
    [this.scans, this.results] = await Promise.all([listScans(), listResults()]);
    this.storage = await storageUse();
  }

  private async createDemo() {
    this.demoBusy = true;
    this.demoFraction = 0;
    try {
      const meta = await this.client.createDemo({ onProgress: (p) => (this.demoFraction = p.fraction) });
      await this.refreshLibrary();
      await this.selectScan(meta.id);
    } catch (err) {
      this.alert = `The demo scan could not be made: ${message(err)}`;
    } finally {
      this.demoBusy = false;
    }
  }

  /** The cone-beam demo, made only when asked for (the first visit stays quick). */
  private async createConeDemo() {
    this.coneDemoBusy = true;
    this.coneDemoFraction = 0;
    try {
      const meta = await this.client.createConeDemo({ onProgress: (p) => (this.coneDemoFraction = p.fraction) });
      await this.refreshLibrary();
      await this.selectScan(meta.id);
    } catch (err) {
      this.alert = `The cone-beam demo could not be made: ${message(err)}`;
    } finally {
      this.coneDemoBusy = false;
    }
  }

  private async selectScan(id: string) {
    this.selectedScanId = id;
    this.geometryError = '';
    const mine = this.results.filter((r) => r.scanId === id);
    this.compareIds = mine.length ? [mine[mine.length - 1].id] : [];
    this.waitingId = '';
    this.comparisons = new Map();
    // The coordinator reads the projections and analyses them (the same row and report as
    // `rimfill inspect`); only the analysed row and the reference image come to the page.
    const { scan, sinogram, report, advice, reference, suggestedOutline } = await this.client.scanOverview(id);
    if (this.selectedScanId !== id) return;
    this.loaded = { id, projections: sinogram, report, advice, gridText: defaultGridText(scan.geometry, report.summary.objectRadiusMm), truth: reference, referenceGrid: reference?.grid, suggested: suggestedOutline };
    this.knowledgeState = { busy: false, error: '' };
    this.referenceId = reference ? TRUTH : '';
    await this.loadImages(this.compareIds);
  }

  private async loadImages(ids: string[]) {
    const missing = ids.filter((id) => id && id !== TRUTH && !this.images.has(id));
    if (!missing.length) return;
    const loaded = await Promise.all(missing.map((id) => loadResultImage(id)));
    const next = new Map(this.images);
    const masks = new Map(this.masks);
    loaded.forEach((l) => {
      next.set(l.meta.id, l.image);
      if (l.undetermined) masks.set(l.meta.id, l.undetermined);
    });
    this.masks = masks;
    this.images = next;
  }

  private async importFiles(files: File[]) {
    this.importing = true;
    this.importError = '';
    try {
      this.importController = new AbortController();
      this.importFraction = 0;
      const meta = await this.client.importScan(files, {
        reduce: this.importReduce, signal: this.importController.signal, onProgress: (p) => (this.importFraction = p.fraction),
      });
      await this.refreshLibrary();
      await this.selectScan(meta.id);
      this.tab = 'scan';
    } catch (err) {
      this.importError = err instanceof StorageFullError || err instanceof InputError ? err.message : `Import failed: ${message(err)}`;
    } finally {
      this.importing = false;
    }
  }

  /** Adds an image file to the scan as a result and shows it beside those ticked. */
  private async importImage(scanId: string, files: File[], slice?: number) {
    this.imageImport = { busy: true, error: '' };
    try {
      const meta = await this.client.importImage(scanId, files, slice);
      await this.refreshLibrary();
      if (this.selectedScanId === scanId && !this.compareIds.includes(meta.id)) await this.toggleResult(meta.id);
      this.imageImport = { busy: false, error: '' };
    } catch (err) {
      this.imageImport = { busy: false, error: err instanceof StorageFullError || err instanceof InputError ? err.message : `The image could not be added: ${message(err)}` };
    }
  }

  /** A stored result as a DICOM CT series: encoded in the worker, handed to the download as the Blob it sends back. */
  private async exportDicom(id: string) {
    this.dicomExport = { busy: true, error: '' };
    try {
      const out = await this.client.exportDicom(id);
      saveFile(out.blob, fileName(out.name, out.kind), out.blob.type);
      this.dicomExport = { busy: false, error: '', note: out.warnings.join('; ') || undefined };
    } catch (err) {
      this.dicomExport = { busy: false, error: err instanceof InputError ? err.message : `The DICOM export failed: ${message(err)}` };
    }
  }

  /** Sets the scan's mu_water (by hand or from a drawn region); its results' images and figures follow. */
  private async calibrate(scanId: string, detail: { muWater: number } | { resultId: string; region: { cx: number; cy: number; radius: number }; materialHu: number }) {
    this.calibrating = { busy: true, error: '' };
    try {
      await this.client.calibrate({ scanId, ...detail });
      await this.refreshLibrary();
      // Loaded images carry the old mu_water: load them again, and the comparisons with them.
      const mine = new Set(this.results.filter((r) => r.scanId === scanId).map((r) => r.id));
      this.images = new Map([...this.images].filter(([id]) => !mine.has(id)));
      this.comparisons = new Map();
      // (A stored reference carries its own mu_water: it stays as it is.)
      if (this.selectedScanId === scanId) {
        await this.loadImages(this.compareIds);
        await this.updateComparisons();
      }
      this.calibrating = { busy: false, error: '' };
    } catch (err) {
      this.calibrating = { busy: false, error: err instanceof StorageFullError || err instanceof InputError ? err.message : `The calibration failed: ${message(err)}` };
    }
  }

  /** Changes the scan's knowledge through the coordinator (checked there; a refusal is shown and nothing is stored). */
  private async changeKnowledge(request: KnowledgeRequest): Promise<boolean> {
    this.knowledgeState = { busy: true, error: '' };
    try {
      await this.client.changeKnowledge(request);
      await this.refreshLibrary();
      this.knowledgeState = { busy: false, error: '' };
      return true;
    } catch (err) {
      this.knowledgeState = { busy: false, error: err instanceof StorageFullError || err instanceof InputError ? err.message : `The knowledge could not be stored: ${message(err)}` };
      return false;
    }
  }

  /** The demo's known region and outline, then the runs that compare them (on the ground truth's grid). */
  private async showKnowledgeDemo(scanId: string) {
    if (!(await this.changeKnowledge({ kind: 'demo', scanId }))) return;
    const scan = this.scans.find((s) => s.id === scanId);
    if (!scan) return;
    const g = this.loaded?.id === scanId ? this.loaded.referenceGrid : undefined;
    const runs = demoRuns(knowledgeOf(scan), this.results.filter((r) => r.scanId === scanId), g ? { size: g.nx, pixel: g.dx } : undefined);
    for (const r of runs) await this.queue.add(scan, r.recipe as unknown as Record<string, unknown>, r.name);
  }

  /**
   * Runs an asynchronous action of the page (an event handler's work): a failure is shown in the
   * page's alert, prefixed with what was being done, and never vanishes.
   */
  private act(what: string, work: () => Promise<unknown>): void {
    work().catch((err) => {
      this.alert = `${what}: ${message(err)}`;
    });
  }

  /** A change of the stored library through the coordinator; the library is read again either way. */
  private async storeAction(action: () => Promise<unknown>) {
    try {
      await action();
    } catch (err) {
      this.alert = message(err);
    }
    await this.refreshLibrary();
  }

  private async deleteScan(id: string) {
    for (const j of this.queue.jobs) if (j.scanId === id && (j.state === 'waiting' || j.state === 'running')) this.queue.cancel(j.key);
    await this.storeAction(() => this.client.deleteScan(id));
    if (this.selectedScanId === id) {
      this.loaded = undefined;
      this.selectedScanId = '';
      if (this.scans.length) await this.selectScan(this.scans[0].id);
    }
  }

  private async applyGeometry(geometry: unknown) {
    try {
      await this.client.setScanGeometry(this.selectedScanId, geometry);
      this.geometryError = '';
      await this.refreshLibrary();
      await this.selectScan(this.selectedScanId);
    } catch (err) {
      this.geometryError = message(err);
    }
  }

  private async storageUseRefresh() {
    this.storage = await storageUse();
  }

  /** The memory budget of runs in bytes when the user set one (else the coordinator takes half of what the browser reports). */
  private budgetBytes(): number | undefined {
    const gb = Number(this.memoryBudgetGb);
    return this.memoryBudgetGb.trim() !== '' && gb > 0 ? gb * 1e9 : undefined;
  }

  private async jobDone(result: ResultMeta) {
    this.results = await listResults();
    if (result.scanId === this.selectedScanId) await this.offerResult(result.id);
  }

  // Comparison choices.

  private async toggleResult(id: string) {
    if (this.compareIds.includes(id)) this.setCompared(withdraw({ ids: this.compareIds, waiting: this.waitingId }, id));
    else await this.offerResult(id);
  }

  /** A result joins the comparison, or waits for the user to choose which image leaves when it is full. */
  private async offerResult(id: string) {
    this.setCompared(offer({ ids: this.compareIds, waiting: this.waitingId }, id));
    await this.loadImages(this.compareIds);
    await this.updateComparisons();
  }

  /** The waiting result takes the place of `leave`. */
  private async replaceCompared(leave: string) {
    this.setCompared(replace({ ids: this.compareIds, waiting: this.waitingId }, leave));
    await this.loadImages(this.compareIds);
    await this.updateComparisons();
  }

  private setCompared(set: { ids: string[]; waiting?: string }) {
    this.compareIds = set.ids;
    this.waitingId = set.waiting ?? '';
  }

  private async setReference(id: string) {
    this.referenceId = id;
    this.comparisons = new Map();
    await this.loadImages([id]);
    await this.updateComparisons();
  }

  /** Comparisons with a result used as reference (ground-truth figures are stored with each result). */
  private async updateComparisons() {
    const ref = this.referenceId;
    if (!ref || ref === TRUTH) return;
    const todo = this.compareIds.filter((id) => id !== ref && !this.comparisons.has(id));
    for (const id of todo) {
      let value: Comparison | string;
      try {
        value = await this.client.compare(id, { kind: 'result', id: ref });
      } catch (err) {
        value = message(err);
      }
      if (this.referenceId !== ref) return;
      this.comparisons = new Map(this.comparisons).set(id, value);
    }
  }

  private renderTab() {
    const scan = this.scans.find((s) => s.id === this.selectedScanId);
    if (!scan) {
      return html`<div class="card placeholder">${this.demoBusy
        ? html`<p>Preparing the demo scan: simulating a truncated fan-beam scan of the thorax phantom and its ground truth…</p><progress max="1" .value=${this.demoFraction}></progress>`
        : this.ready ? 'Import a scan, or add the demo scan, to begin.' : 'Opening the library…'}</div>`;
    }
    return html`
      <section role="tabpanel" aria-labelledby="tab-scan" ?hidden=${this.tab !== 'scan'}>${this.scanTab(scan)}</section>
      <section role="tabpanel" aria-labelledby="tab-reconstruct" ?hidden=${this.tab !== 'reconstruct'}>${this.reconstructTab(scan)}</section>
      <section role="tabpanel" aria-labelledby="tab-images" ?hidden=${this.tab !== 'images'}>${this.imagesTab(scan)}</section>
      <section role="tabpanel" aria-labelledby="tab-prior" ?hidden=${this.tab !== 'prior'}>${this.priorTab(scan)}</section>`;
  }

  private scanTab(scan: ScanMeta) {
    return html`<rf-scan-view .meta=${scan} .projections=${this.loaded?.id === scan.id ? this.loaded.projections : undefined}
        .report=${this.loaded?.id === scan.id ? this.loaded.report : undefined} .advice=${this.loaded?.id === scan.id ? this.loaded.advice : undefined}
        .geometryError=${this.geometryError}
        @geometry-apply=${(e: CustomEvent) => this.act('The geometry could not be applied', () => this.applyGeometry(e.detail.geometry))}></rf-scan-view>`;
  }

  /** Stored results a recipe of `scan` may take as its prior: volumes for a cone-beam scan, else images; any scan's (the same object scanned before). */
  private priorChoices(scan: ScanMeta): Array<{ id: string; label: string }> {
    const cone = scan.geometry.kind === 'cone';
    const scanName = new Map(this.scans.map((s) => [s.id, s.name]));
    return this.results.filter((r) => !!r.volume === cone)
      .map((r) => ({ id: r.id, label: r.scanId === scan.id ? r.name : `${r.name} (scan “${scanName.get(r.scanId) ?? 'deleted'}”)` }));
  }

  private reconstructTab(scan: ScanMeta) {
    return html`<div class="reconstruct">
        <div class="card"><h2>Recipe for “${scan.name}”</h2>
          <rf-recipe-form .referenceGrid=${this.loaded?.id === scan.id ? this.loaded.referenceGrid : undefined} ?cone=${scan.geometry.kind === 'cone'}
            .advice=${this.loaded?.id === scan.id ? this.loaded.advice : undefined} .defaultGrid=${this.loaded?.id === scan.id ? this.loaded.gridText : ''}
            .priorResults=${this.priorChoices(scan)} .knowledge=${scan.knowledge}
            @recipe-queue=${(e: CustomEvent) => this.act('The recipe could not be queued', () => this.queue.add(scan, e.detail.recipe, e.detail.name))}></rf-recipe-form></div>
        <div class="side-cards"><div class="card"><h2>Queue</h2>
          <label class="budget">Memory budget <input type="number" id="memory-budget" min="0.1" max="4" step="0.1" placeholder="browser's"
            .value=${this.memoryBudgetGb} @input=${(e: Event) => (this.memoryBudgetGb = (e.target as HTMLInputElement).value)}> GB
            <span class="muted">(empty: half the device memory the browser reports; a run that would need more is refused before it starts, naming the binning that fits)</span></label>
          <rf-run-queue .jobs=${this.queue.jobs}
            @job-cancel=${(e: CustomEvent) => this.queue.cancel(e.detail.key)}
            @job-rerun=${(e: CustomEvent) => this.act('The run could not be queued again', () => this.queue.rerun(e.detail.key))}
            @job-remove=${(e: CustomEvent) => this.queue.forget([e.detail.key])}
            @queue-clear=${() => this.queue.forget(this.queue.jobs.map((j) => j.key))}
            @job-show=${(e: CustomEvent) => this.act('The result could not be shown', async () => {
              const job = this.queue.jobs.find((j) => j.key === e.detail.key);
              if (job?.resultId) {
                if (job.scanId !== this.selectedScanId) await this.selectScan(job.scanId);
                if (!this.compareIds.includes(job.resultId)) await this.toggleResult(job.resultId);
                this.tab = 'images';
              }
            })}></rf-run-queue></div>
        <div class="card" id="method-guidance"><h2>Choosing a method</h2>
          <rf-method-guidance .summary=${this.loaded?.id === scan.id ? this.loaded.report.summary : undefined} .given=${knowledgeKind(recipeKnowledgeOf(knowledgeOf(scan)))}></rf-method-guidance></div></div>
      </div>`;
  }

  private imagesTab(scan: ScanMeta) {
    return html`<rf-results-view .results=${this.results.filter((r) => r.scanId === scan.id)} .selected=${this.compareIds} .images=${this.images} .masks=${this.masks}
      .truth=${this.loaded?.id === scan.id ? this.loaded.truth : undefined} .referenceId=${this.referenceId} .comparisons=${this.comparisons}
      .scanName=${scan.name} .scanSummary=${scanSummary(scan)} ?cone=${scan.geometry.kind === 'cone'} .imageImport=${this.imageImport}
      @image-files-chosen=${(e: CustomEvent) => this.act('The image could not be added', () => this.importImage(scan.id, e.detail.files, e.detail.slice))}
      @image-import-error-dismiss=${() => (this.imageImport = { ...this.imageImport, error: '' })}
      .muWater=${scan.muWater} .calibration=${scan.calibration} .calibrating=${this.calibrating}
      @calibrate=${(e: CustomEvent) => this.act('The calibration failed', () => this.calibrate(scan.id, e.detail))}
      @calibrate-error-dismiss=${() => (this.calibrating = { ...this.calibrating, error: '' })}
      .waitingId=${this.waitingId} .baselineId=${baselineOf(this.results.filter((r) => r.scanId === scan.id)) ?? ''}
      @result-toggle=${(e: CustomEvent) => this.act('The result could not be shown', () => this.toggleResult(e.detail.id))}
      @compare-replace=${(e: CustomEvent) => this.act('The result could not be shown', () => this.replaceCompared(e.detail.leave))}
      @compare-dismiss=${() => { this.waitingId = ''; }}
      @result-delete=${(e: CustomEvent) => this.act('The library could not be read', () => this.storeAction(async () => {
        await this.client.deleteResult(e.detail.id);
        this.setCompared(withdraw({ ids: this.compareIds, waiting: this.waitingId }, e.detail.id));
        if (this.referenceId === e.detail.id) this.referenceId = this.loaded?.truth ? TRUTH : '';
      }))}
      .scanId=${scan.id} .knowledge=${scan.knowledge} .suggested=${this.loaded?.id === scan.id ? this.loaded.suggested : undefined} .knowledgeState=${this.knowledgeState}
      ?demo=${scan.source.type === 'demo' && scan.geometry.kind !== 'cone'}
      @knowledge-change=${(e: CustomEvent) => this.act('The knowledge could not be stored', () => this.changeKnowledge(e.detail.request))}
      @knowledge-demo=${() => this.act('The demo could not be queued', () => this.showKnowledgeDemo(scan.id))}
      @knowledge-error-dismiss=${() => (this.knowledgeState = { ...this.knowledgeState, error: '' })}
      .dicomExport=${this.dicomExport} @export-dicom=${(e: CustomEvent) => this.act('The DICOM export failed', () => this.exportDicom(e.detail.id))}
      @reference-change=${(e: CustomEvent) => this.act('The reference could not be loaded', () => this.setReference(e.detail.id))}></rf-results-view>
      ${scan.geometry.kind === 'cone' ? html`<rf-volume-view .choices=${volumeChoices(scan, this.results)} .planes=${volumePlanes(this.client, scan.id)}></rf-volume-view>` : nothing}`;
  }

  private priorTab(scan: ScanMeta) {
    return html`<rf-prior-workbench .client=${this.client} .scan=${scan} .results=${this.results.filter((r) => r.scanId === scan.id)}
      .referenceGrid=${this.loaded?.id === scan.id ? this.loaded.referenceGrid : undefined} ?active=${this.tab === 'prior'}
      @library-changed=${() => this.act('The library could not be read', () => this.refreshLibrary())}></rf-prior-workbench>`;
  }

  render() {
    const running = this.queue.pending;
    const resultCount = this.results.filter((r) => r.scanId === this.selectedScanId).length;
    const tabs: Array<[Tab, string, unknown]> = [
      ['scan', 'Projections', nothing],
      ['reconstruct', 'Reconstruct', running ? html`<span class="badge">${running}</span>` : nothing],
      ['images', 'Images', resultCount ? html`<span class="badge">${resultCount}</span>` : nothing],
      ['prior', 'Prior check', nothing],
    ];
    return html`
      <header>
        <span class="brand">Rimfill</span>
        <span class="tagline">CT reconstruction for truncated scans, on this computer</span>
        <span class="engine">${this.engine ? `${this.engine.workers} engine workers · ${this.engine.sharedMemory ? 'shared memory' : 'separate memories'}` : 'starting the engine…'}</span>
      </header>
      <rf-caution></rf-caution>
      ${this.alert ? html`<div class="alert error" role="alert" id="page-alert"><span>${this.alert}</span><button class="small" @click=${() => (this.alert = '')}>Dismiss</button></div>` : nothing}
      <div class="body">
        <aside>
          <rf-scan-library .scans=${this.scans} .selectedId=${this.selectedScanId} ?importing=${this.importing} .importError=${this.importError}
            .importFraction=${this.importFraction} .importReduce=${this.importReduce}
            @reduction-change=${(e: CustomEvent) => (this.importReduce = e.detail.reduce)}
            @import-cancel=${() => this.importController?.abort()}
            ?demoBusy=${this.demoBusy} ?coneDemoBusy=${this.coneDemoBusy} .coneDemoFraction=${this.coneDemoFraction} .storage=${this.storage}
            .libraryBytes=${this.scans.reduce((a, s) => a + s.bytes, 0) + this.results.reduce((a, r) => a + r.bytes, 0)}
            @scan-select=${(e: CustomEvent) => this.act('The scan could not be opened', () => this.selectScan(e.detail.id))}
            @scan-rename=${(e: CustomEvent) => this.act('The library could not be read', () => this.storeAction(() => this.client.renameScan(e.detail.id, e.detail.name)))}
            @scan-delete=${(e: CustomEvent) => this.act('The scan could not be deleted', () => this.deleteScan(e.detail.id))}
            @files-chosen=${(e: CustomEvent) => this.act('The import failed', () => this.importFiles(e.detail.files))}
            @import-error-dismiss=${() => (this.importError = '')}
            @demo-request=${() => this.act('The demo scan could not be made', () => this.createDemo())}
            @cone-demo-request=${() => this.act('The cone-beam demo could not be made', () => this.createConeDemo())}
            @persist-request=${() => this.act('Persistent storage could not be requested', async () => { await requestPersistence(); await this.storageUseRefresh(); })}></rf-scan-library>
        </aside>
        <main>
          <nav role="tablist">${tabs.map(([t, label, extra]) => html`<button role="tab" id=${`tab-${t}`} aria-selected=${this.tab === t} @click=${() => (this.tab = t)}>${label}${extra}</button>`)}</nav>
          ${this.renderTab()}
        </main>
      </div>`;
  }
}
customElements.define('rf-app', AppShell);
