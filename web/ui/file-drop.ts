import { html, LitElement, css } from 'lit';
import { theme } from './theme';

/**
 * A drop area with a file picker.
 * @fires files-chosen - detail: { files: File[] }, when files are dropped or picked.
 */
export class FileDrop extends LitElement {
  static properties = { busy: { type: Boolean }, prompt: { type: String }, inputLabel: { type: String }, dragging: { state: true } };
  /** True while an import runs (the area shows it and refuses more). */
  declare busy: boolean;
  /** What to drop, in plain words. */
  declare prompt: string;
  /** Accessible name of the file picker. */
  declare inputLabel: string;
  declare dragging: boolean;

  static styles = [theme, css`
    .area {
      border: 1.5px dashed var(--border); border-radius: 8px; padding: 12px; text-align: center; font-size: 13px;
      color: var(--muted); background: var(--surface); transition: border-color 0.15s, background 0.15s;
    }
    .area.over { border-color: var(--accent); background: var(--accent-soft); color: var(--accent); }
    input { display: none; }
    button { margin-top: 6px; }
  `];

  constructor() {
    super();
    this.busy = false;
    this.prompt = 'Drop scan files here: NRRD, MetaImage, raw + JSON or TIFF frames (with flat* and dark* files), and a .json geometry when the data carry none';
    this.inputLabel = 'Scan files';
    this.dragging = false;
  }

  private emit(list: FileList | null | undefined) {
    const files = list ? Array.from(list) : [];
    if (files.length && !this.busy) this.dispatchEvent(new CustomEvent('files-chosen', { detail: { files }, bubbles: true, composed: true }));
  }

  render() {
    return html`<div class="area ${this.dragging ? 'over' : ''}"
        @dragover=${(e: DragEvent) => { e.preventDefault(); this.dragging = true; }}
        @dragleave=${() => (this.dragging = false)}
        @drop=${(e: DragEvent) => { e.preventDefault(); this.dragging = false; this.emit(e.dataTransfer?.files); }}>
      ${this.busy ? 'Reading the file…' : this.prompt}
      <div><button ?disabled=${this.busy} @click=${() => this.renderRoot.querySelector('input')!.click()}>Choose files…</button></div>
      <input type="file" multiple aria-label=${this.inputLabel}
        @change=${(e: Event) => { const input = e.target as HTMLInputElement; this.emit(input.files); input.value = ''; }}>
    </div>`;
  }
}
customElements.define('rf-file-drop', FileDrop);
