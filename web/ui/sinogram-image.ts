import { html, LitElement, css, nothing, unsafeCSS } from 'lit';
import type { TruncationReport } from '../core/truncation/detect';
import { autoWindow, greyOf } from './logic/window-level';
import { theme } from './theme';

/** Width of the truncation strips beside the sinogram, in channels of the drawing. */
const STRIP = 12;
const MARK = [224, 150, 40];
const CLEAR = [52, 60, 70];

/**
 * The projections as an image (channels across, views down) with the detected truncation
 * marked in strips at the left and right edges, and a read-out of the view under the cursor.
 */
export class SinogramImage extends LitElement {
  static properties = {
    projections: { attribute: false }, channels: { type: Number }, report: { attribute: false }, anglesDeg: { attribute: false }, hover: { state: true },
  };
  /** Line integrals, [view][channel] (first detector row). */
  declare projections: Float32Array;
  declare channels: number;
  /** Per-view truncation. */
  declare report: TruncationReport;
  /** View angles, degrees (absent for calibrated views). */
  declare anglesDeg: number[] | undefined;
  declare hover: number;

  static styles = [theme, css`
    .frame { background: var(--panel); border-radius: 8px; padding: 8px; }
    canvas { width: 100%; height: 440px; display: block; image-rendering: pixelated; cursor: crosshair; }
    .readout { font-size: 12px; color: var(--muted); min-height: 18px; margin-top: 6px; }
    .key { display: inline-block; width: 10px; height: 10px; border-radius: 2px; vertical-align: -1px; margin: 0 4px 0 10px; }
    .key.mark { background: rgb(${unsafeCSS(MARK.join(','))}); }
    .key.clear { background: rgb(${unsafeCSS(CLEAR.join(','))}); }
  `];

  constructor() {
    super();
    this.hover = -1;
    this.anglesDeg = undefined;
  }

  updated(changed: Map<string, unknown>) {
    if (changed.has('projections') || changed.has('report') || changed.has('channels')) this.draw();
  }

  private draw() {
    const canvas = this.renderRoot.querySelector('canvas');
    if (!canvas || !this.projections || !this.report) return;
    const nCh = this.channels, nViews = this.report.views.length;
    const w = nCh + 2 * STRIP + 4;
    canvas.width = w;
    canvas.height = nViews;
    const ctx = canvas.getContext('2d')!;
    const img = ctx.createImageData(w, nViews);
    const win = autoWindow(this.projections.subarray(0, nCh * nViews));
    const lo = Math.min(0, win.level - win.width / 2);
    const window = { width: win.level + win.width / 2 - lo, level: (win.level + win.width / 2 + lo) / 2 };
    const put = (o: number, c: number[]) => { img.data[o] = c[0]; img.data[o + 1] = c[1]; img.data[o + 2] = c[2]; img.data[o + 3] = 255; };
    for (let v = 0; v < nViews; v++) {
      const r = this.report.views[v];
      const row = v * w * 4;
      for (let k = 0; k < STRIP; k++) {
        put(row + k * 4, r.left.truncated ? MARK : CLEAR);
        put(row + (w - 1 - k) * 4, r.right.truncated ? MARK : CLEAR);
      }
      for (let k = 0; k < nCh; k++) {
        const g = greyOf(this.projections[v * nCh + k], window);
        put(row + (STRIP + 2 + k) * 4, [g, g, g]);
      }
    }
    ctx.putImageData(img, 0, 0);
  }

  private onMove(e: PointerEvent) {
    const c = e.currentTarget as HTMLCanvasElement;
    const rect = c.getBoundingClientRect();
    const v = Math.floor(((e.clientY - rect.top) / rect.height) * this.report.views.length);
    this.hover = v >= 0 && v < this.report.views.length ? v : -1;
  }

  render() {
    const r = this.report;
    const v = this.hover >= 0 && r ? r.views[this.hover] : undefined;
    return html`<div class="frame"><canvas aria-label="Sinogram with truncation marks" @pointermove=${this.onMove} @pointerleave=${() => (this.hover = -1)}></canvas></div>
      <div class="readout num">${v
        ? html`View ${v.view}${this.anglesDeg ? html` (${this.anglesDeg[v.view].toFixed(1)}°)` : nothing}: left edge ${v.left.value.toFixed(3)}${v.left.truncated ? ' — cut off' : ''},
            right edge ${v.right.value.toFixed(3)}${v.right.truncated ? ' — cut off' : ''}`
        : html`Channels across, views down. Edge strips:<span class="key mark"></span>cut off<span class="key clear"></span>reaches air`}</div>`;
  }
}
customElements.define('rf-sinogram-image', SinogramImage);
