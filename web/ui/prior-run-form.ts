import { html, LitElement, css, nothing } from 'lit';
import { live } from 'lit/directives/live.js';
import type { ImageGrid } from '../core/image';
import { ITERATIVE_DEFAULTS } from '../core/iterative/options';
import { DEFAULT_GRID_SIZE } from '../core/recipe/grid';
import type { ModelMeta, ResultMeta } from '../store/records';
import { formatDuration } from './logic/time-left';
import { theme } from './theme';

type GridMode = 'auto' | 'reference' | 'custom';

/** Where the prior comes from. */
export type PriorSourceKind = 'network' | 'result' | 'file';

/** The prior as the form's run event names it. */
export type ChosenPrior =
  | { kind: 'network'; modelId: string }
  | { kind: 'result'; resultId: string }
  | { kind: 'file'; files: File[]; slice?: number };

/** File endings the image readers know (web/core/formats/read-image.ts). */
const IMAGE_FILES = '.nrrd,.nhdr,.mha,.mhd,.raw,.json,.dcm,.tif,.tiff,application/dicom';

/** A running network-prior job as the form shows it. */
export interface PriorJobState {
  scanName: string;
  fraction: number;
  stage: string;
  remainingMs?: number;
}

const emit = (el: HTMLElement, name: string, detail: unknown = {}) => el.dispatchEvent(new CustomEvent(name, { detail, bubbles: true, composed: true }));

/**
 * A prior check: which prior (a network run on the scan, a stored result, an image file), on
 * which image grid, and whether the prior-guided data-consistent reconstruction follows;
 * progress and cancel while it runs.
 * @fires prior-run - detail: { prior: ChosenPrior, grid?, dataConsistent, iterations? }
 * @fires prior-cancel - the user stops the running job
 * @fires model-select - detail: { id }, another network chosen
 */
export class PriorRunForm extends LitElement {
  static properties = {
    models: { attribute: false }, modelId: { type: String }, results: { attribute: false }, referenceGrid: { attribute: false }, scanName: { type: String }, unsupported: { type: String },
    job: { attribute: false }, error: { type: String },
    gridMode: { state: true }, custom: { state: true }, dataConsistent: { state: true }, iterations: { state: true },
    source: { state: true }, resultId: { state: true }, files: { state: true }, slice: { state: true },
  };
  /** Stored networks. */
  declare models: ModelMeta[];
  /** The chosen network ('' for none). */
  declare modelId: string;
  /** Results of the scan that can serve as a prior (images, not volumes). */
  declare results: ResultMeta[];
  /** Grid of the scan's reference image (offered as a choice), when it has one. */
  declare referenceGrid: ImageGrid | undefined;
  /** The scan the step runs on. */
  declare scanName: string;
  /** Why the step cannot run on this scan ('' when it can). */
  declare unsupported: string;
  /** The running job, if any. */
  declare job: PriorJobState | undefined;
  /** Why the last run failed ('' when it did not). */
  declare error: string;
  declare gridMode: GridMode;
  declare custom: { size: number; pixel: number };
  declare dataConsistent: boolean;
  declare iterations: string;
  declare source: PriorSourceKind;
  declare resultId: string;
  declare files: File[];
  declare slice: string;

  static styles = [theme, css`
    :host { display: grid; gap: 12px; }
    .row { display: flex; flex-direction: column; gap: 4px; }
    .choices { display: flex; flex-direction: column; gap: 5px; font-size: 13px; }
    .choices label { color: var(--text); display: flex; gap: 7px; align-items: center; flex-wrap: wrap; }
    .choices input[type='radio'], .choices input[type='checkbox'] { width: auto; margin: 0; }
    input[type='number'] { width: 84px; }
    select { max-width: 100%; }
    .help { font-size: 12px; color: var(--muted); }
    .actions { display: flex; gap: 10px; align-items: center; flex-wrap: wrap; }
    .status { font-size: 12px; color: var(--muted); }
    .filepick { display: flex; gap: 10px; align-items: center; flex-wrap: wrap; font-size: 13px; }
    .filepick input[type='file'] { width: auto; }
  `];

  constructor() {
    super();
    this.models = [];
    this.modelId = '';
    this.referenceGrid = undefined;
    this.scanName = '';
    this.unsupported = '';
    this.job = undefined;
    this.error = '';
    this.gridMode = 'auto';
    this.custom = { size: 512, pixel: 1 };
    this.dataConsistent = true;
    this.iterations = '';
    this.results = [];
    this.source = 'network';
    this.resultId = '';
    this.files = [];
    this.slice = '';
  }

  willUpdate(changed: Map<string, unknown>) {
    if (changed.has('referenceGrid')) this.gridMode = this.referenceGrid ? 'reference' : this.gridMode === 'reference' ? 'auto' : this.gridMode;
  }

  private run() {
    const g = this.referenceGrid;
    const grid = this.gridMode === 'reference' && g ? { size: g.nx, pixel: g.dx } : this.gridMode === 'custom' ? { ...this.custom } : undefined;
    const dataConsistent = this.dataConsistent;
    const iterations = dataConsistent && this.iterations.trim() !== '' ? Number(this.iterations) : undefined;
    emit(this, 'prior-run', { prior: this.chosen(), grid, dataConsistent, iterations });
  }

  /** The prior the form names (run() is enabled only when it names one). */
  private chosen(): ChosenPrior {
    if (this.source === 'network') return { kind: 'network', modelId: this.modelId };
    if (this.source === 'result') return { kind: 'result', resultId: this.chosenResult()?.id ?? '' };
    return { kind: 'file', files: this.files, ...(this.slice.trim() !== '' ? { slice: Number(this.slice) } : {}) };
  }

  private chosenResult(): ResultMeta | undefined {
    return this.results.find((r) => r.id === this.resultId) ?? this.results[this.results.length - 1];
  }

  private ready(): boolean {
    if (this.source === 'network') return !!this.modelId;
    if (this.source === 'result') return !!this.chosenResult();
    return this.files.length > 0;
  }

  private sourceChoices() {
    const pick = (k: PriorSourceKind) => () => (this.source = k);
    const radio = (k: PriorSourceKind, label: string) => html`<label><input type="radio" name="prior-source" value=${k} .checked=${live(this.source === k)} @change=${pick(k)}>${label}</label>`;
    return html`<div class="choices" role="radiogroup" aria-label="Prior">
      ${radio('network', 'A network run on this scan')}
      ${radio('result', 'A result stored with this scan')}
      ${radio('file', 'An image file (an earlier scan, your own model\'s output)')}
    </div>`;
  }

  private sourceDetail() {
    if (this.source === 'network') {
      return html`${this.models.length
          ? html`<select id="prior-model" aria-label="Network" .value=${live(this.modelId)} @change=${(e: Event) => emit(this, 'model-select', { id: (e.target as HTMLSelectElement).value })}>
              ${this.models.map((m) => html`<option value=${m.id} ?selected=${m.id === this.modelId}>${m.name}</option>`)}</select>`
          : html`<span class="help">Import a network first (left).</span>`}
        <span class="help">The network's input is reconstructed from the scan as its description says, on the network's own grid; its output is checked against the measured data.</span>`;
    }
    if (this.source === 'result') {
      const chosen = this.chosenResult();
      return this.results.length
        ? html`<select id="prior-result" aria-label="Result used as the prior" .value=${live(chosen?.id ?? '')} @change=${(e: Event) => (this.resultId = (e.target as HTMLSelectElement).value)}>
            ${[...this.results].reverse().map((r) => html`<option value=${r.id} ?selected=${r.id === chosen?.id}>${r.name}</option>`)}</select>
          <span class="help">For example a water-extrapolated FBP. It is copied, re-projected and checked against the measured data; the stored result is not changed.</span>`
        : html`<span class="help">This scan has no stored image result yet: reconstruct one in the Reconstruct tab.</span>`;
    }
    return html`<div class="filepick"><input type="file" id="prior-file" multiple accept=${IMAGE_FILES} aria-label="Prior image file"
        @change=${(e: Event) => (this.files = Array.from((e.target as HTMLInputElement).files ?? []))}>
        <label>Slice <input type="number" name="prior-slice" min="0" step="1" placeholder="0" aria-label="Slice of a volume file" .value=${live(this.slice)}
          @input=${(e: Event) => (this.slice = (e.target as HTMLInputElement).value)}></label></div>
      <span class="help">NRRD, MetaImage (.mha, or .mhd with its .raw), raw + JSON, DICOM CT or TIFF, in mu (1/mm) or HU (converted with the scan's mu of water),
        at any grid (resampled). For a volume file, give the slice that matches this scan's plane.</span>`;
  }

  private gridChoices() {
    const g = this.referenceGrid;
    const mode = (m: GridMode) => () => (this.gridMode = m);
    return html`<div class="choices" role="radiogroup" aria-label="Image grid">
      <label><input type="radio" name="prior-grid" value="auto" .checked=${live(this.gridMode === 'auto')} @change=${mode('auto')}>Cover the measured field of view and the estimated object (${DEFAULT_GRID_SIZE} px)</label>
      ${g ? html`<label><input type="radio" name="prior-grid" value="reference" .checked=${live(this.gridMode === 'reference')} @change=${mode('reference')}>Match the ground truth: ${g.nx} px × ${g.dx} mm</label>` : nothing}
      <label><input type="radio" name="prior-grid" value="custom" .checked=${live(this.gridMode === 'custom')} @change=${mode('custom')}>Choose:
        <input type="number" name="prior-grid-size" min="8" max="4096" step="1" aria-label="Pixels along each side" .value=${live(String(this.custom.size))} ?disabled=${this.gridMode !== 'custom'}
          @input=${(e: Event) => (this.custom = { ...this.custom, size: Number((e.target as HTMLInputElement).value) })}> px ×
        <input type="number" name="prior-grid-pixel" min="0.01" max="100" step="0.05" aria-label="Pixel size in mm" .value=${live(String(this.custom.pixel))} ?disabled=${this.gridMode !== 'custom'}
          @input=${(e: Event) => (this.custom = { ...this.custom, pixel: Number((e.target as HTMLInputElement).value) })}> mm</label>
    </div>`;
  }

  private dataConsistentChoice() {
    return html`<div class="choices">
      <label><input type="checkbox" name="data-consistent" .checked=${live(this.dataConsistent)}
        @change=${(e: Event) => (this.dataConsistent = (e.target as HTMLInputElement).checked)}>Then reconstruct data-consistently from the prior</label>
      <label>Iterations <input type="number" name="prior-iterations" min="1" max="10000" step="1" placeholder=${String(ITERATIVE_DEFAULTS.iterations)} .value=${live(this.iterations)}
        ?disabled=${!this.dataConsistent} @input=${(e: Event) => (this.iterations = (e.target as HTMLInputElement).value)}></label>
      <span class="help">Prior-guided reconstruction: the measured rays are fitted to the measurements, the rays beyond the detector to the prior's projections,
        starting from the prior, with reweighted total variation. Inside the measured field of view the data overrule the prior.</span>
    </div>`;
  }

  render() {
    const j = this.job;
    return html`
      <div class="row"><label>Prior</label>${this.sourceChoices()}${this.sourceDetail()}</div>
      <div class="row"><label>Image grid</label>${this.gridChoices()}</div>
      <div class="row"><label>Data-consistent step</label>${this.dataConsistentChoice()}</div>
      <div class="actions">
        <button class="primary" id="run-prior" ?disabled=${!this.ready() || !!j || !!this.unsupported} @click=${this.run}>${this.source === 'network' ? 'Run the network on' : 'Check the prior against'} “${this.scanName}”</button>
        ${j ? html`<button id="cancel-prior" @click=${() => emit(this, 'prior-cancel')}>Cancel</button>` : nothing}
      </div>
      ${j ? html`<div><progress max="1" .value=${j.fraction} aria-label="Progress of the prior check"></progress>
          <div class="status num">${(100 * j.fraction).toFixed(0)}% · ${j.stage || 'starting'} · on “${j.scanName}”${j.remainingMs !== undefined ? ` · ${formatDuration(j.remainingMs)} left` : ''}</div></div>` : nothing}
      ${this.unsupported ? html`<p class="warning">${this.unsupported}</p>` : nothing}
      ${this.error ? html`<div class="error" role="alert" id="prior-error">${this.error}</div>` : nothing}`;
  }
}
customElements.define('rf-prior-run-form', PriorRunForm);
