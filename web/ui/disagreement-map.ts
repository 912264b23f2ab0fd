import { html, LitElement, css } from 'lit';
import { greyPixels, type DisplayImage } from './logic/display';
import type { DisplayWindow } from './logic/window-level';
import { theme } from './theme';

/** Map values below this are not drawn (the faint paths every ray through a false structure leaves). */
export const MAP_FLOOR = 0.2;
const AMBER = [245, 166, 35];

/**
 * An image in grey with, in amber, the share of measured rays through each point that disagree
 * with the data (core/consistency/disagreement-map.ts): where in the image the disagreement is.
 */
export class DisagreementMap extends LitElement {
  static properties = { image: { attribute: false }, map: { attribute: false }, window: { attribute: false } };
  /** The checked image in display units. */
  declare image: DisplayImage;
  /** Share of flagged rays per pixel of the image's grid, 0..1. */
  declare map: Float32Array;
  declare window: DisplayWindow;

  static styles = [theme, css`
    .frame { background: var(--panel); border-radius: 8px; padding: 6px; }
    canvas { width: 100%; aspect-ratio: 1 / 1; display: block; image-rendering: pixelated; }
    .key { font-size: 12px; color: var(--muted); margin-top: 4px; }
    .swatch { display: inline-block; width: 34px; height: 9px; border-radius: 2px; vertical-align: -1px; background: linear-gradient(to right, rgba(245,166,35,0.2), rgb(245,166,35)); }
  `];

  updated() {
    const canvas = this.renderRoot.querySelector('canvas');
    if (!canvas || !this.image || !this.map) return;
    const { nx, ny } = this.image.grid;
    canvas.width = nx;
    canvas.height = ny;
    const px = greyPixels(this.image.values, nx, ny, this.window);
    for (let j = 0; j < ny; j++) {
      // greyPixels draws the last image row first (anterior at the top); the map follows.
      const src = (ny - 1 - j) * nx;
      for (let i = 0; i < nx; i++) {
        const m = this.map[src + i];
        if (!(m >= MAP_FLOOR)) continue;
        const a = 0.25 + 0.65 * ((m - MAP_FLOOR) / (1 - MAP_FLOOR));
        const o = 4 * (j * nx + i);
        for (let c = 0; c < 3; c++) px[o + c] = Math.round(px[o + c] * (1 - a) + AMBER[c] * a);
      }
    }
    canvas.getContext('2d')!.putImageData(new ImageData(px as Uint8ClampedArray<ArrayBuffer>, nx, ny), 0, 0);
  }

  render() {
    return html`<div class="frame"><canvas aria-label="Where in the image the disagreeing rays cross"></canvas></div>
      <div class="key"><span class="swatch"></span> share of the measured rays through the point that disagree, from ${Math.round(100 * MAP_FLOOR)} % (faint) to 100 %.
        A wrong structure is crossed only by disagreeing rays and shows at full strength; fainter streaks are the paths of those rays.</div>`;
  }
}
customElements.define('rf-disagreement-map', DisagreementMap);
