import { html, LitElement, css, nothing } from 'lit';
import type { Image2D, ImageGrid } from '../core/image';
import type { TruncationReport } from '../core/truncation/detect';
import type { CorrectionAdvice } from '../core/truncation/recommend';
import type { SuggestedOutline } from '../core/completion/suggested-outline';
import type { Reduction } from '../core/reduction';
import { requestPersistence, storageUse, type StorageUse } from '../store/quota';
import type { ResultMeta, ScanMeta } from '../store/records';
import { listResults } from '../store/results';
import { listScans } from '../store/scans';
import { loadSettings } from '../store/settings';
import type { EngineInfo } from '../worker/app-protocol';
import type { EngineClient } from '../worker/client';
import { ComparisonKeeper } from './comparison-keeper';
import { defaultGridText } from './logic/scan-defaults';
import { QueueKeeper } from './queue-keeper';
import type { ImageImportState } from './result-list';
import type { DicomExportState } from './results-view';
import { createConeDemo, createDemo, deleteScan, importFiles } from './scan-actions';
import { tabPanels } from './shell-tabs';
import { theme } from './theme';
import './caution-banner';
import './scan-library';
import { errorText } from './logic/error-text';

export type Tab = 'scan' | 'reconstruct' | 'images' | 'prior';

export interface LoadedScan {
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

/**
 * The workbench: owns the page's state, reads the library from IndexedDB and sends heavy work
 * to the engine through the client; the elements below it only show and report. Its parts: the
 * library and scan actions (scan-actions.ts), the comparison of results (comparison-keeper.ts),
 * the queue (queue-keeper.ts) and the tab panels (shell-tabs.ts); this file holds the state,
 * the choice of a scan, and the page's frame (header, library, tabs).
 */
export class AppShell extends LitElement {
  static properties = {
    client: { attribute: false },
    scans: { state: true }, results: { state: true }, selectedScanId: { state: true }, loaded: { state: true }, tab: { state: true },
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
  declare importing: boolean;
  /** How far the running import got, and the reduction the next import applies. */
  declare importFraction: number;
  declare importReduce: Reduction;
  /** The memory budget of runs, GB ('' : what the browser reports). */
  declare memoryBudgetGb: string;
  /** Aborts the running import. */
  importController?: AbortController;
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
  readonly queue = new QueueKeeper(this, () => this.client, {
    done: (result) => this.act('The finished run could not be shown', () => this.jobDone(result)),
    ended: () => this.act('Storage use could not be read', () => this.storageUseRefresh()),
    problem: (text) => { this.alert = text; },
  }, () => this.budgetBytes());
  /** The results compared in the Images tab, their pixels and their reference. */
  readonly compared = new ComparisonKeeper(this, () => this.client);

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
      if (!this.scans.length && !settings.demoCreated) await createDemo(this);
      if (!this.selectedScanId && this.scans.length) await this.selectScan(this.scans[0].id);
    } catch (err) {
      this.alert = `The library could not be read: ${errorText(err)}`;
    }
    this.ready = true;
    this.client.info().then((info) => (this.engine = info), (err) => (this.alert = `The engine did not start: ${errorText(err)}`));
  }

  async refreshLibrary() {
    [this.scans, this.results] = await Promise.all([listScans(), listResults()]);
    this.storage = await storageUse();
  }

  async selectScan(id: string) {
    this.selectedScanId = id;
    this.geometryError = '';
    const mine = this.results.filter((r) => r.scanId === id);
    this.compared.startScan(mine.length ? mine[mine.length - 1].id : undefined);
    // The coordinator reads the projections and analyses them (the same row and report as
    // `rimfill inspect`); only the analysed row and the reference image come to the page.
    const { scan, sinogram, report, advice, reference, suggestedOutline } = await this.client.scanOverview(id);
    if (this.selectedScanId !== id) return;
    this.loaded = { id, projections: sinogram, report, advice, gridText: defaultGridText(scan.geometry, report.summary.objectRadiusMm), truth: reference, referenceGrid: reference?.grid, suggested: suggestedOutline };
    this.knowledgeState = { busy: false, error: '' };
    await this.compared.scanReference(!!reference);
  }

  /**
   * Runs an asynchronous action of the page (an event handler's work): a failure is shown in the
   * page's alert, prefixed with what was being done, and never vanishes.
   */
  act(what: string, work: () => Promise<unknown>): void {
    work().catch((err) => {
      this.alert = `${what}: ${errorText(err)}`;
    });
  }

  /** A change of the stored library through the coordinator; the library is read again either way. */
  async storeAction(action: () => Promise<unknown>) {
    try {
      await action();
    } catch (err) {
      this.alert = errorText(err);
    }
    await this.refreshLibrary();
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
    if (result.scanId === this.selectedScanId) await this.compared.offer(result.id);
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
            @scan-delete=${(e: CustomEvent) => this.act('The scan could not be deleted', () => deleteScan(this, e.detail.id))}
            @files-chosen=${(e: CustomEvent) => this.act('The import failed', () => importFiles(this, e.detail.files))}
            @import-error-dismiss=${() => (this.importError = '')}
            @demo-request=${() => this.act('The demo scan could not be made', () => createDemo(this))}
            @cone-demo-request=${() => this.act('The cone-beam demo could not be made', () => createConeDemo(this))}
            @persist-request=${() => this.act('Persistent storage could not be requested', async () => { await requestPersistence(); await this.storageUseRefresh(); })}></rf-scan-library>
        </aside>
        <main>
          <nav role="tablist">${tabs.map(([t, label, extra]) => html`<button role="tab" id=${`tab-${t}`} aria-selected=${this.tab === t} @click=${() => (this.tab = t)}>${label}${extra}</button>`)}</nav>
          ${tabPanels(this)}
        </main>
      </div>`;
  }
}
customElements.define('rf-app', AppShell);
