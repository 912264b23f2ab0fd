import { html, LitElement, css, nothing } from 'lit';
import { formatBytes } from '../store/quota';
import type { ModelMeta } from '../store/records';
import { inputSourceSummary, modelGridSummary, normalizationSummary } from './logic/describe-model';
import { theme } from './theme';
import './file-drop';

const emit = (el: HTMLElement, name: string, detail: unknown = {}) => el.dispatchEvent(new CustomEvent(name, { detail, bubbles: true, composed: true }));

/**
 * The stored networks: import (the .onnx file with its .json description, checked before
 * anything is stored), what each expects and returns, and delete.
 * @fires model-files-chosen - detail: { files }, from the drop area
 * @fires model-delete - detail: { id }
 * @fires model-select - detail: { id }
 * @fires model-import-error-dismiss - the user closed the import error
 */
export class ModelLibrary extends LitElement {
  static properties = {
    models: { attribute: false }, selectedId: { type: String }, importing: { type: Boolean }, importError: { type: String },
    confirming: { state: true },
  };
  /** Stored networks, oldest first. */
  declare models: ModelMeta[];
  /** The network chosen for the next run. */
  declare selectedId: string;
  /** An import is being checked. */
  declare importing: boolean;
  /** Why the last import was refused ('' when it was not). */
  declare importError: string;
  declare confirming: string;

  static styles = [theme, css`
    :host { display: flex; flex-direction: column; gap: 10px; }
    ul { list-style: none; margin: 0; padding: 0; display: flex; flex-direction: column; gap: 8px; }
    li { border: 1px solid var(--border); border-radius: 8px; padding: 9px 11px; cursor: pointer; background: var(--surface); }
    li:hover { border-color: #b5bfcc; }
    li[aria-selected='true'] { border-color: var(--accent); box-shadow: inset 3px 0 0 var(--accent); }
    .name { font-weight: 600; font-size: 13.5px; overflow-wrap: anywhere; }
    .sub { font-size: 12px; color: var(--muted); margin-top: 2px; overflow-wrap: anywhere; }
    dl { display: grid; grid-template-columns: max-content 1fr; gap: 2px 10px; margin: 6px 0 0; font-size: 12.5px; }
    dt { color: var(--muted); }
    dd { margin: 0; }
    .notes { font-size: 12px; color: var(--muted); margin-top: 4px; font-style: italic; }
    .actions { display: flex; gap: 6px; margin-top: 7px; }
    .empty { font-size: 13px; color: var(--muted); margin: 0; }
    .dismissable { display: flex; gap: 8px; align-items: flex-start; justify-content: space-between; }
    .dismissable button { padding: 0 6px; line-height: 18px; }
    .warning { margin-top: 6px; padding: 5px 8px; font-size: 12px; }
  `];

  constructor() {
    super();
    this.models = [];
    this.selectedId = '';
    this.importing = false;
    this.importError = '';
    this.confirming = '';
  }

  private item(m: ModelMeta) {
    const i = m.info;
    return html`<li data-id=${m.id} aria-selected=${m.id === this.selectedId} @click=${() => emit(this, 'model-select', { id: m.id })}>
      <div class="name">${m.name}</div>
      <div class="sub">${m.fileNames.model} · ${formatBytes(m.bytes)} · ${m.fileNames.description}</div>
      <dl>
        <dt>Input</dt><dd>“${i.input.name}”: ${modelGridSummary(i.input)}</dd>
        <dt>made by</dt><dd>${inputSourceSummary(i)}</dd>
        <dt>values</dt><dd>${normalizationSummary(i.input)}</dd>
        <dt>Output</dt><dd>“${i.output.name}”: ${normalizationSummary(i.output)}</dd>
      </dl>
      ${i.notes ? html`<div class="notes">${i.notes}</div>` : nothing}
      ${m.warnings.map((w) => html`<div class="warning">${w}</div>`)}
      <div class="actions" @click=${(e: Event) => e.stopPropagation()}>
        ${this.confirming === m.id
          ? html`<span class="sub">Delete this network?</span>
              <button class="small danger" @click=${() => { this.confirming = ''; emit(this, 'model-delete', { id: m.id }); }}>Delete</button>
              <button class="small" @click=${() => (this.confirming = '')}>Keep</button>`
          : html`<button class="small danger" @click=${() => (this.confirming = m.id)}>Delete…</button>`}
      </div>
    </li>`;
  }

  render() {
    return html`
      <rf-file-drop ?busy=${this.importing} inputLabel="Network files (.onnx and .json)"
        prompt="Drop a network here: its .onnx file together with its .json description (format rimfill-model/1)"
        @files-chosen=${(e: CustomEvent) => { e.stopPropagation(); emit(this, 'model-files-chosen', { files: e.detail.files }); }}></rf-file-drop>
      ${this.importing ? html`<p class="sub">Checking the network in the runtime…</p>` : nothing}
      ${this.importError ? html`<div class="error dismissable" role="alert" id="model-import-error"><span>Not imported: ${this.importError}</span>
          <button class="small" aria-label="Dismiss" @click=${() => emit(this, 'model-import-error-dismiss')}>×</button></div>` : nothing}
      ${this.models.length
        ? html`<ul aria-label="Networks">${this.models.map((m) => this.item(m))}</ul>`
        : html`<p class="empty">No network yet. A network is an image-to-image model exported as ONNX, with a short JSON description of the image it expects and returns.</p>`}`;
  }
}
customElements.define('rf-model-library', ModelLibrary);
