import { html, LitElement, css, nothing } from 'lit';
import { live } from 'lit/directives/live.js';
import type { Tool } from './image-viewer';
import type { DisplayUnit } from './logic/display';
import { WINDOW_PRESETS, type DisplayWindow } from './logic/window-level';
import { theme } from './theme';

const TOOLS: Array<{ tool: Tool; label: string; title: string }> = [
  { tool: 'window', label: 'Contrast', title: 'Drag: right/left widens/narrows the window, up/down raises/lowers the level (also Ctrl+drag)' },
  { tool: 'move', label: 'Move', title: 'Drag to move the images (also Shift+drag or the middle button); wheel zooms; double-click resets' },
  { tool: 'line', label: 'Line profile', title: 'Drag across the images to plot values along the line' },
  { tool: 'region', label: 'Region', title: 'Drag out a circle to measure mean and SD inside it' },
];

const SLICE_TOOL = { tool: 'slice' as Tool, label: 'Slices', title: 'Click or drag in one plane to move the other planes through that point' };

/** Tools that draw the object's outline (the knowledge panel takes what they draw). */
const OUTLINE_TOOLS: Array<{ tool: Tool; label: string; title: string }> = [
  { tool: 'ellipse', label: 'Ellipse', title: 'Drag from the centre of the object outwards to draw its outline as an ellipse' },
  { tool: 'polygon', label: 'Polygon', title: 'Click the corners of the object\'s outline; click the first corner again or double-click to close it' },
];

const send = (el: HTMLElement, name: string, detail: unknown = {}) => el.dispatchEvent(new CustomEvent(name, { detail, bubbles: true, composed: true }));

/**
 * Window presets and values, the drag tool, and display switches for the image panels.
 * @fires window-change - detail: { window }
 * @fires window-auto - fit the window to the images
 * @fires tool-change - detail: { tool }
 * @fires fov-toggle - detail: { show }
 * @fires difference-toggle - detail: { show }
 * @fires knowledge-toggle - detail: { show }: draw the known regions and the outline
 * @fires undetermined-toggle - detail: { show }: draw the overlay over pixels a result does not determine
 */
export class ViewerToolbar extends LitElement {
  static properties = {
    window: { attribute: false }, unit: { type: String }, tool: { type: String },
    showFov: { type: Boolean }, showDifference: { type: Boolean }, canDifference: { type: Boolean }, sliceTool: { type: Boolean },
    knowledgeTools: { type: Boolean }, showKnowledge: { type: Boolean }, canUndetermined: { type: Boolean }, showUndetermined: { type: Boolean },
  };
  declare window: DisplayWindow;
  declare unit: DisplayUnit;
  declare tool: Tool;
  declare showFov: boolean;
  /** Panels show differences from the reference. */
  declare showDifference: boolean;
  /** A reference exists to take differences from. */
  declare canDifference: boolean;
  /** Offer the slice tool (planes of a volume) and hide the difference switch. */
  declare sliceTool: boolean;
  /** Offer the outline tools and the switch that draws the knowledge. */
  declare knowledgeTools: boolean;
  declare showKnowledge: boolean;
  /** A shown image leaves pixels undetermined (DBP): offer the switch of their overlay. */
  declare canUndetermined: boolean;
  declare showUndetermined: boolean;

  static styles = [theme, css`
    :host { display: flex; flex-wrap: wrap; gap: 8px 18px; align-items: center; }
    .group { display: flex; gap: 5px; align-items: center; flex-wrap: wrap; }
    .group > label:first-child { margin-right: 2px; }
    input[type='number'] { width: 78px; }
    .check { display: flex; gap: 5px; align-items: center; color: var(--text); }
  `];

  private setWindow(part: 'width' | 'level', text: string) {
    const v = Number(text);
    if (text.trim() === '' || !Number.isFinite(v) || (part === 'width' && v <= 0)) return;
    send(this, 'window-change', { window: { ...this.window, [part]: v } });
  }

  render() {
    const hu = this.unit === 'HU';
    return html`
      <div class="group" role="group" aria-label="Window">
        <label>Window</label>
        ${hu ? WINDOW_PRESETS.map((p) => html`<button class="small" data-preset=${p.name}
          aria-pressed=${this.window.width === p.width && this.window.level === p.level}
          title=${`Width ${p.width} HU, level ${p.level} HU`}
          @click=${() => send(this, 'window-change', { window: { width: p.width, level: p.level } })}>${p.name}</button>`) : nothing}
        <button class="small" @click=${() => send(this, 'window-auto')} title="Fit the window to the values in the images">Fit</button>
        <label>W <input type="number" name="width" min="0" step=${hu ? 10 : 0.001} .value=${live(String(Number(this.window.width.toPrecision(5))))} @change=${(e: Event) => this.setWindow('width', (e.target as HTMLInputElement).value)}></label>
        <label>L <input type="number" name="level" step=${hu ? 10 : 0.001} .value=${live(String(Number(this.window.level.toPrecision(5))))} @change=${(e: Event) => this.setWindow('level', (e.target as HTMLInputElement).value)}></label>
        <span class="muted">${this.unit}</span>
      </div>
      <div class="group" role="group" aria-label="Drag tool">
        <label>Drag</label>
        ${[...(this.sliceTool ? [SLICE_TOOL] : []), ...TOOLS, ...(this.knowledgeTools ? OUTLINE_TOOLS : [])].map((t) => html`<button class="small" data-tool=${t.tool} aria-pressed=${this.tool === t.tool} title=${t.title} @click=${() => send(this, 'tool-change', { tool: t.tool })}>${t.label}</button>`)}
      </div>
      <div class="group">
        <label class="check"><input type="checkbox" .checked=${live(this.showFov)} @change=${(e: Event) => send(this, 'fov-toggle', { show: (e.target as HTMLInputElement).checked })}>Field of view</label>
        ${this.sliceTool ? nothing : html`<label class="check"><input type="checkbox" name="difference" .checked=${live(this.showDifference)} ?disabled=${!this.canDifference}
          @change=${(e: Event) => send(this, 'difference-toggle', { show: (e.target as HTMLInputElement).checked })}>Difference from reference</label>`}
        ${this.knowledgeTools ? html`<label class="check"><input type="checkbox" name="show-knowledge" .checked=${live(this.showKnowledge)}
          @change=${(e: Event) => send(this, 'knowledge-toggle', { show: (e.target as HTMLInputElement).checked })}>Knowledge</label>` : nothing}
        ${this.canUndetermined ? html`<label class="check" title="Violet stripes over the pixels a result does not determine (DBP: outside the measured field of view, or on chords that cross no known region): they hold air as a fill, not a measurement, and give no value"><input type="checkbox" name="show-undetermined" .checked=${live(this.showUndetermined)}
          @change=${(e: Event) => send(this, 'undetermined-toggle', { show: (e.target as HTMLInputElement).checked })}>Not determined</label>` : nothing}
      </div>`;
  }
}
customElements.define('rf-viewer-toolbar', ViewerToolbar);
