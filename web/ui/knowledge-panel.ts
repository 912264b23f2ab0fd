import { html, LitElement, css, nothing } from 'lit';
import type { SuggestedOutline } from '../core/completion/suggested-outline';
import type { ScanKnowledge } from '../store/records';
import type { RegionMark } from './image-viewer';
import type { KnowledgeOn } from './known-regions';
import type { EllipseDraft, PolygonDraft } from './logic/knowledge-draw';
import type { ImageImportState } from './result-list';
import { theme } from './theme';
import './known-regions';
import './outline-editor';

const send = (el: HTMLElement, name: string, detail: unknown = {}) => el.dispatchEvent(new CustomEvent(name, { detail, bubbles: true, composed: true }));

/**
 * What the user knows about the object, kept with the scan and used by recipes: known regions
 * and the outline (rf-known-regions, rf-outline-editor), drawn on the highlighted image. On the
 * demo scan, one click adds a known region and the outline and queues the runs that compare them.
 * @fires knowledge-demo
 * @fires knowledge-error-dismiss
 * (and, from the parts: knowledge-change, region-draft, ellipse-draft, polygon-draft)
 */
export class KnowledgePanel extends LitElement {
  static properties = {
    scanId: { type: String }, knowledge: { attribute: false }, region: { attribute: false }, ellipse: { attribute: false }, polygon: { attribute: false },
    suggested: { attribute: false }, on: { attribute: false }, onLabel: { type: String }, state: { attribute: false }, demo: { type: Boolean }, muWater: { type: Number },
  };
  declare scanId: string;
  declare knowledge: ScanKnowledge | undefined;
  declare region: RegionMark | null;
  declare ellipse: EllipseDraft | null;
  declare polygon: PolygonDraft;
  declare suggested: SuggestedOutline | null | undefined;
  /** The highlighted image (undefined: none). */
  declare on: KnowledgeOn;
  declare onLabel: string;
  /** A change being stored, and why the last one was refused. */
  declare state: ImageImportState;
  /** The scan is the 2D demo: offer its knowledge. */
  declare demo: boolean;
  /** The scan's mu of water (known values are in HU). */
  declare muWater: number | undefined;

  static styles = [theme, css`
    .parts { display: grid; grid-template-columns: repeat(auto-fit, minmax(300px, 1fr)); gap: 14px 22px; margin-top: 10px; }
    .intro { font-size: 13px; color: var(--muted); margin: 0; }
    .demo { display: flex; flex-wrap: wrap; gap: 8px; align-items: center; margin-top: 8px; font-size: 13px; }
    .legend { display: inline-flex; gap: 10px; flex-wrap: wrap; font-size: 12px; color: var(--muted); }
    .legend span::before { content: ''; display: inline-block; width: 14px; margin-right: 4px; vertical-align: middle; border-top: 2px solid var(--c); }
    .legend .dashed::before { border-top-style: dashed; }
  `];

  updated() {
    this.renderRoot.querySelectorAll<HTMLElement>('.legend span').forEach((s) => { s.style.setProperty('--c', s.dataset.colour ?? ''); });
  }

  render() {
    const busy = this.state?.busy ?? false;
    return html`<div class="card" id="knowledge-panel">
      <h2>What you know about the object</h2>
      <p class="intro">Kept with the scan; a recipe uses it when ticked in the Reconstruct tab. The truncated data cannot tell a smooth offset inside the field of view: a region of known value, or the outline, settles it.</p>
      <div class="legend"><span data-colour="#5ee08a">known region</span><span data-colour="#ff9f43">outline</span><span class="dashed" data-colour="#c9b52e">suggested by the data</span><span class="dashed" data-colour="#888">being drawn</span></div>
      ${this.muWater ? nothing : html`<p class="warning" id="knowledge-needs-mu">The scan's mu of water is unknown: known values are in HU, so set it first (HU calibration).</p>`}
      ${this.demo ? html`<div class="demo"><button class="small" id="knowledge-demo" ?disabled=${busy} @click=${() => send(this, 'knowledge-demo')}>Show it on the demo</button>
        <span class="muted">adds a known region (the heart, muscle) and the body's outline, and queues FBP with each beside FBP with water cylinder extension.</span></div>` : nothing}
      <div class="parts">
        <rf-known-regions .scanId=${this.scanId} .knowledge=${this.knowledge} .region=${this.region} .on=${this.on} ?busy=${busy}></rf-known-regions>
        <rf-outline-editor .scanId=${this.scanId} .knowledge=${this.knowledge} .ellipse=${this.ellipse} .polygon=${this.polygon} .suggested=${this.suggested}
          .on=${this.on} .onLabel=${this.onLabel} ?busy=${busy}></rf-outline-editor>
      </div>
      ${busy ? html`<p class="muted" id="knowledge-busy">Checking and storing…</p>` : nothing}
      ${this.state?.error ? html`<div class="error" role="alert" id="knowledge-error">Not stored: ${this.state.error}
        <button class="small" @click=${() => send(this, 'knowledge-error-dismiss')}>Dismiss</button></div>` : nothing}
    </div>`;
  }
}
customElements.define('rf-knowledge-panel', KnowledgePanel);
