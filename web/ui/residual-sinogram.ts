import { html, LitElement, css, nothing } from 'lit';
import { divergingRgb } from './logic/disagreement';
import { theme } from './theme';

/** Colour of flagged rays when they are marked (amber: distinct from the blue-red scale). */
const FLAG = [235, 170, 20];
const FLAG_ALPHA = 0.55;

const fmt = (v: number) => (Math.abs(v) >= 0.01 || v === 0 ? v.toFixed(3) : v.toExponential(1));

/**
 * A residual sinogram (re-projected image minus measured data, channels across, views down) in
 * a diverging colour scale, with the rays that disagree optionally marked, a colour bar and a
 * read-out of the ray under the cursor.
 */
export class ResidualSinogram extends LitElement {
  static properties = {
    residual: { attribute: false }, flagged: { attribute: false }, channels: { type: Number }, halfRange: { type: Number },
    anglesDeg: { attribute: false }, markFlagged: { type: Boolean }, hover: { state: true },
  };
  /** A f - p, [view][channel], line-integral units (NaN: not measured). */
  declare residual: Float32Array;
  /** 1 where the ray disagrees, [view][channel]. */
  declare flagged: Uint8Array;
  declare channels: number;
  /** Residual shown at full colour (symmetric scale). */
  declare halfRange: number;
  /** View angles, degrees (absent for calibrated views). */
  declare anglesDeg: ArrayLike<number> | undefined;
  /** Paint the flagged rays. */
  declare markFlagged: boolean;
  declare hover: { view: number; channel: number } | null;

  static styles = [theme, css`
    .frame { background: var(--panel); border-radius: 8px; padding: 6px; }
    canvas { width: 100%; height: 300px; display: block; image-rendering: pixelated; cursor: crosshair; }
    .bar { display: grid; grid-template-columns: auto 1fr auto; gap: 8px; align-items: center; font-size: 11px; color: var(--muted); margin-top: 6px; }
    .ramp { height: 10px; border-radius: 3px; background: linear-gradient(to right, rgb(33,102,172), rgb(247,247,247), rgb(178,24,43)); border: 1px solid var(--border); }
    .readout { font-size: 12px; color: var(--muted); min-height: 18px; margin-top: 4px; }
  `];

  constructor() {
    super();
    this.channels = 1;
    this.halfRange = 1;
    this.anglesDeg = undefined;
    this.markFlagged = true;
    this.hover = null;
  }

  updated(changed: Map<string, unknown>) {
    if (['residual', 'flagged', 'channels', 'halfRange', 'markFlagged'].some((k) => changed.has(k))) this.draw();
  }

  private draw() {
    const canvas = this.renderRoot.querySelector('canvas');
    if (!canvas || !this.residual) return;
    const nCh = this.channels, nViews = Math.floor(this.residual.length / nCh);
    canvas.width = nCh;
    canvas.height = nViews;
    const ctx = canvas.getContext('2d')!;
    const img = ctx.createImageData(nCh, nViews);
    for (let i = 0; i < nCh * nViews; i++) {
      const c = divergingRgb(this.residual[i], this.halfRange);
      // Flagged rays: amber over the residual colour, which stays readable underneath.
      const a = this.markFlagged && this.flagged?.[i] ? FLAG_ALPHA : 0;
      for (let k = 0; k < 3; k++) img.data[4 * i + k] = Math.round(c[k] * (1 - a) + FLAG[k] * a);
      img.data[4 * i + 3] = 255;
    }
    ctx.putImageData(img, 0, 0);
  }

  private onMove(e: PointerEvent) {
    const rect = (e.currentTarget as HTMLCanvasElement).getBoundingClientRect();
    const nViews = Math.floor(this.residual.length / this.channels);
    const view = Math.floor(((e.clientY - rect.top) / rect.height) * nViews);
    const channel = Math.floor(((e.clientX - rect.left) / rect.width) * this.channels);
    this.hover = view >= 0 && view < nViews && channel >= 0 && channel < this.channels ? { view, channel } : null;
  }

  render() {
    const h = this.hover;
    const i = h ? h.view * this.channels + h.channel : -1;
    return html`<div class="frame"><canvas aria-label="Residual sinogram: re-projected image minus measured data, channels across, views down"
        @pointermove=${this.onMove} @pointerleave=${() => (this.hover = null)}></canvas></div>
      <div class="bar num"><span>−${fmt(this.halfRange)}</span><span class="ramp"></span><span>+${fmt(this.halfRange)}</span></div>
      <div class="readout num">${h
        ? html`View ${h.view}${this.anglesDeg ? html` (${Number(this.anglesDeg[h.view]).toFixed(1)}°)` : nothing}, channel ${h.channel}:
            residual ${fmt(this.residual[i])}${this.flagged?.[i] ? ' — disagrees' : ''}`
        : html`Channels across, views down. Blue: the image attenuates less than measured; red: more${this.markFlagged ? '; amber: rays that disagree' : ''}.`}</div>`;
  }
}
customElements.define('rf-residual-sinogram', ResidualSinogram);
