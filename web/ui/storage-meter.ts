import { html, LitElement, css } from 'lit';
import { formatBytes, type StorageUse } from '../store/quota';
import { theme } from './theme';

/**
 * Storage used by this page against what the browser allows, and whether it is kept.
 * @fires persist-request - the user asks the browser to keep the data.
 */
export class StorageMeter extends LitElement {
  static properties = { use: { attribute: false }, storedBytes: { type: Number } };
  /** What the browser reports. */
  declare use: StorageUse;
  /** Bytes of scans and results in the library. */
  declare storedBytes: number;

  static styles = [theme, css`
    .bar { height: 6px; background: var(--border); border-radius: 3px; overflow: hidden; margin: 6px 0; }
    .fill { height: 100%; background: var(--accent); }
    .line { font-size: 12px; color: var(--muted); display: flex; justify-content: space-between; align-items: center; gap: 6px; }
  `];

  constructor() {
    super();
    this.use = {};
    this.storedBytes = 0;
  }

  updated() {
    const fill = this.renderRoot.querySelector<HTMLElement>('.fill');
    const { usage, quota } = this.use;
    if (fill) fill.style.width = usage !== undefined && quota ? `${Math.min(100, (100 * usage) / quota).toFixed(1)}%` : '0%';
  }

  render() {
    const { usage, quota, persisted } = this.use;
    return html`<div class="line"><span>Library: ${formatBytes(this.storedBytes)}</span>
        <span class="num">${usage !== undefined ? `${formatBytes(usage)} of ${quota ? formatBytes(quota) : '?'} used` : 'usage not reported'}</span></div>
      <div class="bar" role="meter" aria-label="Storage used" aria-valuemin="0" aria-valuemax=${quota ?? 0} aria-valuenow=${usage ?? 0}><div class="fill"></div></div>
      <div class="line">${persisted
        ? html`<span>Kept by the browser (persistent)</span>`
        : html`<span>The browser may clear it when space runs low</span>
            <button class="small" @click=${() => this.dispatchEvent(new CustomEvent('persist-request', { bubbles: true, composed: true }))}>Keep</button>`}</div>`;
  }
}
customElements.define('rf-storage-meter', StorageMeter);
