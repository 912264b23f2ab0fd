import { html, LitElement, css, nothing } from 'lit';
import { formatBytes, type StorageUse } from '../store/quota';
import type { ScanMeta } from '../store/records';
import { describeReduction, type Reduction } from '../core/reduction';
import { geometrySummary } from './logic/describe';
import './reduction-input';
import { theme } from './theme';
import './file-drop';
import './storage-meter';

const emit = (el: HTMLElement, name: string, detail: unknown = {}) =>
  el.dispatchEvent(new CustomEvent(name, { detail, bubbles: true, composed: true }));

/**
 * The stored scans: import, choose, rename, delete, and storage use.
 * @fires scan-select - detail: { id }
 * @fires scan-rename - detail: { id, name }
 * @fires scan-delete - detail: { id }
 * @fires demo-request - the user asks for the demo scan (shown when it is not in the library)
 * @fires cone-demo-request - the user asks for the cone-beam demo scan (likewise)
 * @fires files-chosen - from the drop area, detail: { files }
 * @fires import-error-dismiss - the user closed the import error
 * @fires import-cancel - the user stops the running import (nothing is stored)
 * @fires reduction-change - from the import options, detail: { reduce }
 */
export class ScanLibrary extends LitElement {
  static properties = {
    scans: { attribute: false },
    selectedId: { type: String },
    importing: { type: Boolean },
    importError: { type: String },
    importFraction: { type: Number },
    importReduce: { attribute: false },
    demoBusy: { type: Boolean },
    coneDemoBusy: { type: Boolean },
    coneDemoFraction: { type: Number },
    storage: { attribute: false },
    libraryBytes: { type: Number },
    editing: { state: true },
    confirming: { state: true },
  };
  /** Stored scans, oldest first. */
  declare scans: ScanMeta[];
  /** The scan shown on the right. */
  declare selectedId: string;
  /** An import is running. */
  declare importing: boolean;
  /** Why the last import failed ('' when it did not). */
  declare importError: string;
  /** How far the running import got (0 to 1). */
  declare importFraction: number;
  /** Binning, view step and rows applied to the next import. */
  declare importReduce: Reduction;
  /** The demo scan is being made. */
  declare demoBusy: boolean;
  /** The cone-beam demo scan is being made, and how far it got (0 to 1). */
  declare coneDemoBusy: boolean;
  declare coneDemoFraction: number;
  /** What the browser reports about storage. */
  declare storage: StorageUse;
  /** Bytes of scans and results stored. */
  declare libraryBytes: number;
  declare editing: string;
  declare confirming: string;

  static styles = [theme, css`
    :host { display: flex; flex-direction: column; gap: 12px; }
    ul { list-style: none; margin: 0; padding: 0; display: flex; flex-direction: column; gap: 6px; }
    li {
      border: 1px solid var(--border); border-radius: 8px; background: var(--surface); padding: 9px 11px; cursor: pointer;
    }
    li:hover { border-color: #b5bfcc; }
    li[aria-selected='true'] { border-color: var(--accent); box-shadow: inset 3px 0 0 var(--accent); }
    .name { font-weight: 600; font-size: 13.5px; overflow-wrap: anywhere; }
    .sub { font-size: 12px; color: var(--muted); margin-top: 2px; }
    .tags { display: flex; gap: 6px; margin-top: 4px; flex-wrap: wrap; }
    .tag { font-size: 11px; padding: 1px 6px; border-radius: 10px; background: var(--accent-soft); color: var(--accent); }
    .tag.warn { background: var(--warn-soft); color: var(--warn); }
    .actions { display: flex; gap: 6px; margin-top: 7px; }
    .rename { width: 100%; }
    .empty { font-size: 13px; color: var(--muted); }
    .dismissable { display: flex; gap: 8px; align-items: flex-start; justify-content: space-between; }
    .dismissable button { padding: 0 6px; line-height: 18px; }
  `];

  constructor() {
    super();
    this.scans = [];
    this.selectedId = '';
    this.importing = false;
    this.importError = '';
    this.importFraction = 0;
    this.importReduce = {};
    this.demoBusy = false;
    this.coneDemoBusy = false;
    this.coneDemoFraction = 0;
    this.storage = {};
    this.libraryBytes = 0;
    this.editing = '';
    this.confirming = '';
  }

  private finishRename(id: string, input: HTMLInputElement, save: boolean) {
    if (this.editing !== id) return;
    this.editing = '';
    if (save && input.value.trim() && input.value.trim() !== this.scans.find((s) => s.id === id)?.name) emit(this, 'scan-rename', { id, name: input.value });
  }

  private item(s: ScanMeta) {
    const selected = s.id === this.selectedId;
    return html`<li role="option" aria-selected=${selected} data-scan-id=${s.id} @click=${() => emit(this, 'scan-select', { id: s.id })}>
      ${this.editing === s.id
        ? html`<input class="rename" aria-label="New name" .value=${s.name}
            @click=${(e: Event) => e.stopPropagation()}
            @keydown=${(e: KeyboardEvent) => {
              if (e.key === 'Enter') this.finishRename(s.id, e.target as HTMLInputElement, true);
              if (e.key === 'Escape') this.finishRename(s.id, e.target as HTMLInputElement, false);
            }}
            @blur=${(e: Event) => this.finishRename(s.id, e.target as HTMLInputElement, true)}>`
        : html`<div class="name">${s.name}</div>`}
      <div class="sub">${geometrySummary(s.geometry)}</div>
      <div class="tags">
        <span class="tag">${formatBytes(s.bytes)}</span>
        ${s.hasReference ? html`<span class="tag">with ground truth</span>` : nothing}
        ${s.source.type === 'demo' ? html`<span class="tag">simulated</span>` : nothing}
        ${s.reduction ? html`<span class="tag" title=${`imported from ${s.reduction.from.channels} × ${s.reduction.from.rows} cells, ${s.reduction.from.views} views`}>${describeReduction(s.reduction.applied)}</span>` : nothing}
        ${s.warnings.length ? html`<span class="tag warn" title=${s.warnings.join('\n')}>check data</span>` : nothing}
      </div>
      ${selected ? html`<div class="actions" @click=${(e: Event) => e.stopPropagation()}>
        ${this.confirming === s.id
          ? html`<span class="sub">Delete it and its results?</span>
              <button class="small danger" @click=${() => { this.confirming = ''; emit(this, 'scan-delete', { id: s.id }); }}>Delete</button>
              <button class="small" @click=${() => (this.confirming = '')}>Keep</button>`
          : html`<button class="small" @click=${async () => {
                this.editing = s.id;
                await this.updateComplete;
                this.renderRoot.querySelector<HTMLInputElement>('.rename')?.select();
              }}>Rename</button>
              <button class="small danger" @click=${() => (this.confirming = s.id)}>Delete…</button>`}
      </div>` : nothing}
    </li>`;
  }

  render() {
    const hasDemo = this.scans.some((s) => s.source.type === 'demo' && s.geometry.kind !== 'cone');
    const hasConeDemo = this.scans.some((s) => s.source.type === 'demo' && s.geometry.kind === 'cone');
    return html`
      <h2>Scans</h2>
      <rf-file-drop ?busy=${this.importing}></rf-file-drop>
      ${this.importing ? html`<div class="sub" id="import-progress">Importing: ${Math.round(100 * this.importFraction)}% stored
        <button class="small" id="import-cancel" @click=${() => emit(this, 'import-cancel')}>Cancel</button></div>` : nothing}
      <details id="import-options"><summary class="sub">Reduce on import (binning, views, rows)</summary>
        <rf-reduction-input name="import" .reduce=${this.importReduce}></rf-reduction-input></details>
      ${this.importError ? html`<div class="error dismissable" role="alert" id="import-error"><span>${this.importError}</span>
        <button class="small" aria-label="Dismiss" @click=${() => emit(this, 'import-error-dismiss')}>×</button></div>` : nothing}
      ${this.scans.length
        ? html`<ul role="listbox" aria-label="Stored scans">${this.scans.map((s) => this.item(s))}</ul>`
        : html`<p class="empty">${this.demoBusy ? 'Preparing the demo scan…' : 'No scans stored yet.'}</p>`}
      ${!hasDemo && !this.demoBusy ? html`<div><button class="small" @click=${() => emit(this, 'demo-request')}>Add the demo scan</button></div>` : nothing}
      ${this.coneDemoBusy
        ? html`<div class="sub">Simulating the cone-beam demo scan and its ground-truth volume…<progress max="1" .value=${this.coneDemoFraction}></progress></div>`
        : !hasConeDemo ? html`<div><button class="small" id="cone-demo" title="A truncated C-arm cone-beam scan of the 3D thorax phantom, with its ground-truth volume (made in the page, about 20 MB)"
            @click=${() => emit(this, 'cone-demo-request')}>Add the cone-beam demo scan</button></div>` : nothing}
      <rf-storage-meter .use=${this.storage} .storedBytes=${this.libraryBytes}></rf-storage-meter>
    `;
  }
}
customElements.define('rf-scan-library', ScanLibrary);
