import { html, LitElement, css, nothing } from 'lit';
import { live } from 'lit/directives/live.js';
import type { ImageGrid } from '../core/image';
import { ITERATIVE_DEFAULTS } from '../core/iterative/options';
import { DEFAULT_GRID_SIZE } from '../core/recipe/grid';
import type { ModelMeta } from '../store/records';
import { formatDuration } from './logic/time-left';
import { theme } from './theme';

type GridMode = 'auto' | 'reference' | 'custom';

/** A running network-prior job as the form shows it. */
export interface PriorJobState {
  scanName: string;
  fraction: number;
  stage: string;
  remainingMs?: number;
}

const emit = (el: HTMLElement, name: string, detail: unknown = {}) => el.dispatchEvent(new CustomEvent(name, { detail, bubbles: true, composed: true }));

/**
 * The network-prior step: which network, on which image grid, and whether the prior-guided
 * data-consistent reconstruction follows; progress and cancel while it runs.
 * @fires prior-run - detail: { modelId, grid?, dataConsistent, iterations? }
 * @fires prior-cancel - the user stops the running job
 * @fires model-select - detail: { id }, another network chosen
 */
export class PriorRunForm extends LitElement {
  static properties = {
    models: { attribute: false }, modelId: { type: String }, referenceGrid: { attribute: false }, scanName: { type: String }, unsupported: { type: String },
    job: { attribute: false }, error: { type: String },
    gridMode: { state: true }, custom: { state: true }, dataConsistent: { state: true }, iterations: { state: true },
  };
  /** Stored networks. */
  declare models: ModelMeta[];
  /** The chosen network ('' for none). */
  declare modelId: string;
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
  }

  willUpdate(changed: Map<string, unknown>) {
    if (changed.has('referenceGrid')) this.gridMode = this.referenceGrid ? 'reference' : this.gridMode === 'reference' ? 'auto' : this.gridMode;
  }

  private run() {
    const g = this.referenceGrid;
    const grid = this.gridMode === 'reference' && g ? { size: g.nx, pixel: g.dx } : this.gridMode === 'custom' ? { ...this.custom } : undefined;
    const dataConsistent = this.dataConsistent;
    const iterations = dataConsistent && this.iterations.trim() !== '' ? Number(this.iterations) : undefined;
    emit(this, 'prior-run', { modelId: this.modelId, grid, dataConsistent, iterations });
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
        @change=${(e: Event) => (this.dataConsistent = (e.target as HTMLInputElement).checked)}>Then reconstruct data-consistently from the network's image</label>
      <label>Iterations <input type="number" name="prior-iterations" min="1" max="10000" step="1" placeholder=${String(ITERATIVE_DEFAULTS.iterations)} .value=${live(this.iterations)}
        ?disabled=${!this.dataConsistent} @input=${(e: Event) => (this.iterations = (e.target as HTMLInputElement).value)}></label>
      <span class="help">Prior-guided reconstruction: the measured rays are fitted to the measurements, the rays beyond the detector to the network's image,
        starting from it, with reweighted total variation. Inside the measured field of view the data overrule the network.</span>
    </div>`;
  }

  render() {
    const j = this.job;
    return html`
      <div class="row"><label for="prior-model">Network</label>
        ${this.models.length
          ? html`<select id="prior-model" .value=${live(this.modelId)} @change=${(e: Event) => emit(this, 'model-select', { id: (e.target as HTMLSelectElement).value })}>
              ${this.models.map((m) => html`<option value=${m.id} ?selected=${m.id === this.modelId}>${m.name}</option>`)}</select>`
          : html`<span class="help">Import a network first (left).</span>`}
        <span class="help">The network's input is reconstructed from the scan as its description says, on the network's own grid; its output is checked against the measured data.</span></div>
      <div class="row"><label>Image grid</label>${this.gridChoices()}</div>
      <div class="row"><label>Data-consistent step</label>${this.dataConsistentChoice()}</div>
      <div class="actions">
        <button class="primary" id="run-prior" ?disabled=${!this.modelId || !!j || !!this.unsupported} @click=${this.run}>Run the network on “${this.scanName}”</button>
        ${j ? html`<button id="cancel-prior" @click=${() => emit(this, 'prior-cancel')}>Cancel</button>` : nothing}
      </div>
      ${j ? html`<div><progress max="1" .value=${j.fraction} aria-label="Progress of the network prior"></progress>
          <div class="status num">${(100 * j.fraction).toFixed(0)}% · ${j.stage || 'starting'} · on “${j.scanName}”${j.remainingMs !== undefined ? ` · ${formatDuration(j.remainingMs)} left` : ''}</div></div>` : nothing}
      ${this.unsupported ? html`<p class="warning">${this.unsupported}</p>` : nothing}
      ${this.error ? html`<div class="error" role="alert" id="prior-error">${this.error}</div>` : nothing}`;
  }
}
customElements.define('rf-prior-run-form', PriorRunForm);
