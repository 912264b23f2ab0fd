import { html, LitElement, css, nothing } from 'lit';
import { CancelledError, InputError } from '../core/errors';
import { anglesRad } from '../core/geometry/types';
import type { ImageGrid } from '../core/image';
import { loadConsistency } from '../store/consistency';
import { listModels } from '../store/models';
import { StorageFullError } from '../store/quota';
import type { ModelMeta, ResultMeta, ScanMeta } from '../store/records';
import { loadResultImage } from '../store/results';
import type { EngineClient } from '../worker/client';
import type { NetworkPriorRequest } from '../worker/app-protocol';
import { toDisplay } from './logic/display';
import { remainingMs } from './logic/time-left';
import type { ChosenPrior, PriorJobState } from './prior-run-form';
import type { RunSide, ShownRun } from './prior-run-view';
import { theme } from './theme';
import './model-library';
import './prior-run-form';
import './prior-run-view';

const message = (err: unknown) => (err instanceof Error ? err.message : String(err));

/** The checked prior a data-consistent result was made from ('' for other results). */
const priorIdOf = (r: ResultMeta) => (r.recipe.method === 'prior' ? (r.recipe.prior as { resultId?: string } | undefined)?.resultId ?? '' : '');

/** The data-consistent result made from a checked prior, if any. */
function partnerOf(results: ResultMeta[], priorId: string): ResultMeta | undefined {
  return results.find((r) => priorIdOf(r) === priorId);
}

/**
 * Prior checks: import and list networks; check a prior against the chosen scan's measured data
 * (a network run on the scan, a stored result or an image file), then the data-consistent step;
 * show a check side by side (prior-run-view.ts). Its parts render only while the tab is shown (`active`); a run goes on
 * in between.
 * @fires library-changed - networks or results were stored or deleted
 */
export class PriorWorkbench extends LitElement {
  static properties = {
    client: { attribute: false }, scan: { attribute: false }, results: { attribute: false }, referenceGrid: { attribute: false }, active: { type: Boolean },
    models: { state: true }, modelId: { state: true }, importing: { state: true }, importError: { state: true },
    job: { state: true }, runError: { state: true }, shownId: { state: true }, shown: { state: true },
  };
  /** The engine facade. */
  declare client: EngineClient;
  /** The chosen scan. */
  declare scan: ScanMeta | undefined;
  /** Results of the chosen scan, oldest first. */
  declare results: ResultMeta[];
  /** Grid of the scan's reference image, when it has one. */
  declare referenceGrid: ImageGrid | undefined;
  /** The tab is shown. */
  declare active: boolean;
  declare models: ModelMeta[];
  declare modelId: string;
  declare importing: boolean;
  declare importError: string;
  declare job: PriorJobState | undefined;
  declare runError: string;
  /** Checked prior shown ('' for the latest of the scan). */
  declare shownId: string;
  declare shown: ShownRun | undefined;
  private controller?: AbortController;
  /** The run whose images are loaded or loading ('' for none). */
  private loading = '';

  static styles = [theme, css`
    :host { display: grid; gap: 14px; }
    .top { display: grid; grid-template-columns: minmax(280px, 0.9fr) minmax(320px, 1.1fr); gap: 14px; align-items: start; }
    @media (max-width: 1100px) { .top { grid-template-columns: 1fr; } }
    .runs { display: flex; gap: 8px; align-items: center; flex-wrap: wrap; }
    .sub { font-size: 12px; color: var(--muted); }
    .placeholder { color: var(--muted); font-size: 13px; }
  `];

  constructor() {
    super();
    this.scan = undefined;
    this.results = [];
    this.referenceGrid = undefined;
    this.active = false;
    this.models = [];
    this.modelId = '';
    this.importing = false;
    this.importError = '';
    this.job = undefined;
    this.runError = '';
    this.shownId = '';
    this.shown = undefined;
  }

  async firstUpdated() {
    await this.refreshModels();
  }

  willUpdate(changed: Map<string, unknown>) {
    if (changed.has('scan') && (changed.get('scan') as ScanMeta | undefined)?.id !== this.scan?.id) this.shownId = '';
  }

  updated(changed: Map<string, unknown>) {
    if (this.active && ['results', 'scan', 'shownId', 'active'].some((k) => changed.has(k))) void this.loadShown();
  }

  /** Checked priors of the scan (results holding a prior and its report, not the data-consistent results made from them). */
  private checkedPriors(): ResultMeta[] {
    return this.results.filter((r) => r.consistency && !priorIdOf(r));
  }

  private async refreshModels() {
    try {
      this.models = await listModels();
      if (!this.models.some((m) => m.id === this.modelId)) this.modelId = this.models[this.models.length - 1]?.id ?? '';
    } catch (err) {
      this.importError = `The stored networks could not be read: ${message(err)}`;
    }
  }

  private changed() {
    this.dispatchEvent(new CustomEvent('library-changed', { bubbles: true, composed: true }));
  }

  private async importFiles(files: File[]) {
    this.importing = true;
    this.importError = '';
    try {
      const meta = await this.client.importModel(files);
      await this.refreshModels();
      this.modelId = meta.id;
      this.changed();
    } catch (err) {
      this.importError = err instanceof InputError || err instanceof StorageFullError ? err.message : `the check failed: ${message(err)}`;
    } finally {
      this.importing = false;
    }
  }

  private async deleteModel(id: string) {
    try {
      await this.client.deleteModel(id);
    } catch (err) {
      this.importError = `The network could not be deleted: ${message(err)}`;
    }
    await this.refreshModels();
    this.changed();
  }

  private async run(detail: { prior: ChosenPrior } & Omit<NetworkPriorRequest, 'scanId' | 'modelId'>) {
    const scan = this.scan;
    if (!scan || this.job) return;
    this.runError = '';
    const controller = new AbortController();
    this.controller = controller;
    this.job = { scanName: scan.name, fraction: 0, stage: '' };
    try {
      const { prior, ...rest } = detail;
      const options = {
        signal: controller.signal,
        onProgress: (p: { fraction: number; stage: string; elapsedMs: number }) => (this.job = { scanName: scan.name, fraction: p.fraction, stage: p.stage, remainingMs: remainingMs(p.fraction, p.elapsedMs) }),
      };
      const shownId = prior.kind === 'network'
        ? (await this.client.runNetworkPrior({ ...rest, modelId: prior.modelId, scanId: scan.id }, options)).network.id
        : (await this.client.checkPrior({ ...rest, source: prior, scanId: scan.id }, options)).prior.id;
      if (this.scan?.id === scan.id) this.shownId = shownId;
      this.changed();
    } catch (err) {
      if (!(err instanceof CancelledError)) this.runError = err instanceof InputError || err instanceof StorageFullError ? err.message : `The run failed: ${message(err)}`;
    } finally {
      this.job = undefined;
      this.controller = undefined;
    }
  }

  /** Loads the images and reports of the shown run (the chosen one, else the latest). */
  private async loadShown() {
    const runs = this.checkedPriors();
    const net = runs.find((r) => r.id === this.shownId) ?? runs[runs.length - 1];
    // (a network's output, a stored result or an image file)
    const dc = net && partnerOf(this.results, net.id);
    const key = net ? `${net.id}|${dc?.id ?? ''}` : '';
    if (key === this.loading) return;
    this.loading = key;
    if (!net) {
      this.shown = undefined;
      return;
    }
    const side = async (meta: ResultMeta): Promise<RunSide> => {
      const [{ image }, c] = await Promise.all([loadResultImage(meta.id), loadConsistency(meta.id)]);
      return { meta, display: toDisplay(image, meta.name), report: c?.report, checkedGrid: c?.checkedGrid, map: c?.map };
    };
    const skipped = (net.report.dataConsistent as { skipped?: string } | undefined)?.skipped;
    try {
      const shown: ShownRun = {
        prior: await side(net),
        consistent: dc ? await side(dc) : undefined,
        consistentMissing: skipped ? `The data-consistent step did not run: ${skipped}.` : 'No data-consistent result was made from this prior (it may have been deleted).',
      };
      if (this.loading === key) this.shown = shown;
    } catch (err) {
      if (this.loading === key) this.loading = '';
      this.runError = `The stored run could not be read: ${message(err)}`;
    }
  }

  /** Why a prior check cannot run on the chosen scan ('' when it can). */
  private unsupported(): string {
    const g = this.scan?.geometry;
    return g && (g.kind === 'cone' || g.detector.rows !== 1)
      ? `This scan has ${g.detector.rows} detector rows (${g.kind} beam); prior checks work on 2D scans (one detector row). A cone-beam scan takes a prior in a recipe of the Reconstruct tab.` : '';
  }

  private angles(): number[] | undefined {
    const g = this.scan?.geometry;
    if (!g?.anglesDeg || g.views) return undefined;
    return Array.from(anglesRad(g), (r) => (r * 180) / Math.PI);
  }

  private resultsSection() {
    const runs = this.checkedPriors();
    if (!runs.length) return html`<div class="card placeholder">No prior checked against this scan yet.</div>`;
    const shownId = this.shown?.prior.meta.id ?? '';
    return html`
      <div class="card runs"><label for="prior-shown">Check shown</label>
        <select id="prior-shown" @change=${(e: Event) => (this.shownId = (e.target as HTMLSelectElement).value)}>
          ${[...runs].reverse().map((r) => html`<option value=${r.id} ?selected=${r.id === shownId}>${r.name} · ${new Date(r.createdAt).toLocaleString()}</option>`)}
        </select>
        <span class="sub">Both images are also in the Images tab, to compare with other results and the ground truth.</span></div>
      ${this.shown ? html`<rf-prior-run-view .run=${this.shown} .anglesDeg=${this.angles()}></rf-prior-run-view>` : html`<div class="card placeholder">Loading the run…</div>`}`;
  }

  render() {
    if (!this.active) return nothing;
    return html`
      <div class="top">
        <div class="card"><h2>Networks</h2>
          <rf-model-library .models=${this.models} .selectedId=${this.modelId} ?importing=${this.importing} .importError=${this.importError}
            @model-files-chosen=${(e: CustomEvent) => this.importFiles(e.detail.files)}
            @model-select=${(e: CustomEvent) => (this.modelId = e.detail.id)}
            @model-delete=${(e: CustomEvent) => this.deleteModel(e.detail.id)}
            @model-import-error-dismiss=${() => (this.importError = '')}></rf-model-library></div>
        <div class="card"><h2>Check a prior against “${this.scan?.name ?? ''}”</h2>
          <rf-prior-run-form .models=${this.models} .modelId=${this.modelId} .results=${this.results.filter((r) => !r.volume)} .referenceGrid=${this.referenceGrid} .scanName=${this.scan?.name ?? ''}
            .unsupported=${this.unsupported()}
            .job=${this.job} .error=${this.runError}
            @model-select=${(e: CustomEvent) => (this.modelId = e.detail.id)}
            @prior-run=${(e: CustomEvent) => this.run(e.detail)}
            @prior-cancel=${() => this.controller?.abort()}></rf-prior-run-form></div>
      </div>
      ${this.resultsSection()}`;
  }
}
customElements.define('rf-prior-workbench', PriorWorkbench);
