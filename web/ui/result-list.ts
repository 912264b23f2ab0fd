import { html, LitElement, css, nothing } from 'lit';
import { live } from 'lit/directives/live.js';
import type { ResultMeta } from '../store/records';
import { MAX_COMPARED } from './logic/compare-set';
import { SERIES_COLOURS, theme } from './theme';
import './file-drop';

const send = (el: HTMLElement, name: string, detail: unknown) => el.dispatchEvent(new CustomEvent(name, { detail, bubbles: true, composed: true }));

/** An image file being added to the scan, as the list shows it. */
export interface ImageImportState {
  busy: boolean;
  /** Why the last one was refused ('' when it was not). */
  error: string;
}

/**
 * A scan's results: tick up to four to compare (a fifth asks which one leaves), choose the
 * reference, delete; the uncorrected baseline and the ground truth as reference come back with
 * one click; add an image file as a result (an earlier reconstruction, a DICOM CT image, a
 * model's output).
 * @fires result-toggle - detail: { id }
 * @fires result-delete - detail: { id }
 * @fires reference-change - detail: { id }
 * @fires image-files-chosen - detail: { files, slice? }
 * @fires image-import-error-dismiss
 */
export class ResultList extends LitElement {
  static properties = {
    results: { attribute: false }, selected: { attribute: false }, referenceId: { type: String }, hasTruth: { type: Boolean }, cone: { type: Boolean }, baselineId: { type: String },
    imageImport: { attribute: false }, confirming: { state: true }, slice: { state: true },
  };
  declare results: ResultMeta[];
  /** Ticked ids, in order. */
  declare selected: string[];
  declare referenceId: string;
  /** The scan has a ground truth to compare with. */
  declare hasTruth: boolean;
  /** The uncorrected baseline result ('' when there is none). */
  declare baselineId: string;
  /** The scan is cone beam: an added image file is a volume. */
  declare cone: boolean;
  declare imageImport: ImageImportState;
  declare confirming: string;
  declare slice: string;

  static styles = [theme, css`
    :host { display: flex; flex-direction: column; gap: 10px; }
    ul { list-style: none; margin: 0; padding: 0; display: flex; flex-direction: column; gap: 6px; }
    li { border: 1px solid var(--border); border-radius: 8px; background: var(--surface); padding: 8px 10px; }
    li.on { border-color: var(--swatch); box-shadow: inset 3px 0 0 var(--swatch); }
    .top { display: flex; gap: 8px; align-items: flex-start; }
    .top label { color: var(--text); font-size: 13px; font-weight: 600; overflow-wrap: anywhere; cursor: pointer; }
    .sub { font-size: 12px; color: var(--muted); margin: 2px 0 0 24px; }
    .row { display: flex; gap: 6px; margin: 6px 0 0 24px; }
    select { width: 100%; }
    .empty { font-size: 13px; color: var(--muted); }
    .slice { display: flex; gap: 6px; align-items: center; font-size: 12px; margin-top: 8px; }
    .slice input { width: 70px; }
    .tag { font-size: 11px; font-weight: 600; color: var(--accent); background: var(--accent-soft); border-radius: 9px; padding: 0 6px; white-space: nowrap; align-self: flex-start; }
    .back { display: flex; flex-wrap: wrap; gap: 6px; margin: 0 0 8px; }
  `];

  constructor() {
    super();
    this.results = [];
    this.selected = [];
    this.referenceId = '';
    this.hasTruth = false;
    this.baselineId = '';
    this.cone = false;
    this.imageImport = { busy: false, error: '' };
    this.confirming = '';
    this.slice = '';
  }

  updated() {
    this.renderRoot.querySelectorAll<HTMLElement>('li[data-colour]').forEach((li) => { li.style.setProperty('--swatch', li.dataset.colour ?? ''); });
  }

  /** One-click ways back to the uncorrected baseline and to the ground truth as reference. */
  private bringBack() {
    const baseline = this.baselineId && !this.selected.includes(this.baselineId);
    const truth = this.hasTruth && this.referenceId !== 'truth';
    if (!baseline && !truth) return nothing;
    return html`<div class="back">
      ${baseline ? html`<button class="small" id="bring-back-baseline" @click=${() => send(this, 'result-toggle', { id: this.baselineId })}>Show the uncorrected baseline</button>` : nothing}
      ${truth ? html`<button class="small" id="bring-back-truth" @click=${() => send(this, 'reference-change', { id: 'truth' })}>Compare with the ground truth</button>` : nothing}
    </div>`;
  }

  render() {
    const full = this.selected.length >= MAX_COMPARED;
    return html`
      <div class="card">
        <h2>Results</h2>
        ${this.bringBack()}
        ${this.results.length ? html`<ul>${this.results.map((r) => {
          const k = this.selected.indexOf(r.id);
          const inside = r.metrics?.regions.insideFov;
          return html`<li class=${k >= 0 ? 'on' : ''} data-colour=${k >= 0 ? SERIES_COLOURS[k % 4] : ''} data-result-id=${r.id}>
            <div class="top"><input type="checkbox" id=${`pick-${r.id}`} .checked=${live(k >= 0)}
              @change=${() => send(this, 'result-toggle', { id: r.id })}><label for=${`pick-${r.id}`}>${r.name}</label>${r.id === this.baselineId ? html`<span class="tag">baseline</span>` : nothing}${r.id === this.referenceId ? html`<span class="tag">reference</span>` : nothing}</div>
            <div class="sub num">${new Date(r.createdAt).toLocaleString()} · ${r.seconds.toFixed(1)} s${inside ? ` · RMSE in field ${inside.rmse.toFixed(0)} ${r.metrics!.unit}` : ''}</div>
            <div class="row">${this.confirming === r.id
              ? html`<button class="small danger" @click=${() => { this.confirming = ''; send(this, 'result-delete', { id: r.id }); }}>Delete</button>
                  <button class="small" @click=${() => (this.confirming = '')}>Keep</button>`
              : html`<button class="small danger" @click=${() => (this.confirming = r.id)}>Delete…</button>`}</div>
          </li>`;
        })}</ul>
        ${full ? html`<p class="empty">${MAX_COMPARED} are compared: ticking another asks which one leaves.</p>` : nothing}` : html`<p class="empty">None yet.</p>`}
      </div>
      <div class="card">
        <h2>Reference</h2>
        <label>Compare with
          <select id="reference" @change=${(e: Event) => send(this, 'reference-change', { id: (e.target as HTMLSelectElement).value })}>
            ${this.hasTruth ? html`<option value="truth" ?selected=${this.referenceId === 'truth'}>Ground truth</option>` : nothing}
            <option value="" ?selected=${this.referenceId === ''}>Nothing</option>
            ${this.results.map((r) => html`<option value=${r.id} ?selected=${this.referenceId === r.id}>${r.name}</option>`)}
          </select></label>
      </div>
      <div class="card">
        <h2>Add an image</h2>
        <rf-file-drop ?busy=${this.imageImport.busy} inputLabel="Image files"
          prompt=${`Drop an image ${this.cone ? 'volume ' : ''}of this object: an earlier full-field reconstruction, a DICOM CT ${this.cone ? 'series' : 'image'}, your own model's output (NRRD, MetaImage, raw + JSON, DICOM, TIFF; mu or HU)`}
          @files-chosen=${(e: CustomEvent) => send(this, 'image-files-chosen', { files: e.detail.files, ...(this.slice.trim() !== '' ? { slice: Number(this.slice) } : {}) })}></rf-file-drop>
        ${this.cone ? nothing : html`<label class="slice">Slice of a volume file <input type="number" name="image-slice" min="0" step="1" placeholder="0" .value=${this.slice}
          @input=${(e: Event) => (this.slice = (e.target as HTMLInputElement).value)}></label>`}
        <p class="empty">It becomes a result of this scan, checked against the measured data: compare with it, choose it as the reference, or start the prior-guided method from it.</p>
        ${this.imageImport.error ? html`<div class="error" role="alert" id="image-import-error">${this.imageImport.error}
          <button class="small" @click=${() => send(this, 'image-import-error-dismiss', {})}>Dismiss</button></div>` : nothing}
      </div>`;
  }
}
customElements.define('rf-result-list', ResultList);
