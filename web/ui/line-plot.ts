import { html, LitElement, css, svg, nothing } from 'lit';
import { extent, niceTicks } from './logic/ticks';
import { theme } from './theme';

export interface PlotSeries {
  label: string;
  colour: string;
  x: ArrayLike<number>;
  y: ArrayLike<number>;
}

export interface PlotMarker {
  y: number;
  label: string;
}

const W = 640, H = 230, M = { left: 58, right: 14, top: 12, bottom: 40 };

const fmt = (v: number) => (Math.abs(v) >= 1e4 || (Math.abs(v) < 1e-2 && v !== 0) ? v.toExponential(1) : String(Number(v.toPrecision(4))));

/** An SVG line plot of one or more series, with axes, a legend and optional horizontal markers. */
export class LinePlot extends LitElement {
  static properties = { series: { attribute: false }, markers: { attribute: false }, xLabel: { type: String }, yLabel: { type: String }, caption: { type: String } };
  /** Lines to draw (NaN values leave gaps). */
  declare series: PlotSeries[];
  /** Horizontal reference lines. */
  declare markers: PlotMarker[];
  declare xLabel: string;
  declare yLabel: string;
  /** Accessible description. */
  declare caption: string;

  static styles = [theme, css`
    svg { width: 100%; height: auto; display: block; font: 11px system-ui, sans-serif; }
    .legend { display: flex; gap: 14px; flex-wrap: wrap; font-size: 12px; margin: 2px 0 0 ${M.left}px; }
    .swatch { display: inline-block; width: 14px; height: 3px; border-radius: 2px; vertical-align: middle; margin-right: 5px; }
  `];

  constructor() {
    super();
    this.series = [];
    this.markers = [];
    this.xLabel = '';
    this.yLabel = '';
    this.caption = '';
  }

  updated() {
    this.renderRoot.querySelectorAll<HTMLElement>('.swatch').forEach((el) => { el.style.background = el.dataset.colour ?? ''; });
  }

  private path(s: PlotSeries, sx: (v: number) => number, sy: (v: number) => number): string {
    let d = '', pen = false;
    for (let i = 0; i < s.x.length; i++) {
      const x = s.x[i], y = s.y[i];
      if (!Number.isFinite(x) || !Number.isFinite(y)) {
        pen = false;
        continue;
      }
      d += `${pen ? 'L' : 'M'}${sx(x).toFixed(1)},${sy(y).toFixed(1)}`;
      pen = true;
    }
    return d;
  }

  render() {
    if (!this.series.length) return nothing;
    const [x0, x1] = extent(this.series.map((s) => s.x));
    const [y0, y1] = extent([...this.series.map((s) => s.y), this.markers.map((m) => m.y)], 0.06);
    const pw = W - M.left - M.right, ph = H - M.top - M.bottom;
    const sx = (v: number) => M.left + ((v - x0) / (x1 - x0 || 1)) * pw;
    const sy = (v: number) => M.top + ph - ((v - y0) / (y1 - y0 || 1)) * ph;
    const xt = niceTicks(x0, x1, 6), yt = niceTicks(y0, y1, 5);
    return html`<svg viewBox="0 0 ${W} ${H}" role="img" aria-label=${this.caption || this.yLabel}>
        <rect x=${M.left} y=${M.top} width=${pw} height=${ph} fill="#fff" stroke="#d8dce2"></rect>
        ${yt.map((t) => svg`<line x1=${M.left} x2=${M.left + pw} y1=${sy(t)} y2=${sy(t)} stroke="#eef0f3"></line>
          <text x=${M.left - 6} y=${sy(t) + 3.5} text-anchor="end" fill="#5d6877">${fmt(t)}</text>`)}
        ${xt.map((t) => svg`<line x1=${sx(t)} x2=${sx(t)} y1=${M.top} y2=${M.top + ph} stroke="#eef0f3"></line>
          <text x=${sx(t)} y=${M.top + ph + 15} text-anchor="middle" fill="#5d6877">${fmt(t)}</text>`)}
        ${this.markers.map((m) => svg`<line x1=${M.left} x2=${M.left + pw} y1=${sy(m.y)} y2=${sy(m.y)} stroke="#8a5300" stroke-dasharray="5 4"></line>
          <text x=${M.left + pw - 4} y=${sy(m.y) - 4} text-anchor="end" fill="#8a5300">${m.label}</text>`)}
        ${this.series.map((s) => svg`<path d=${this.path(s, sx, sy)} fill="none" stroke=${s.colour} stroke-width="1.4" stroke-linejoin="round"></path>`)}
        <text x=${M.left + pw / 2} y=${H - 6} text-anchor="middle" fill="#1c2430">${this.xLabel}</text>
        <text transform="translate(13 ${M.top + ph / 2}) rotate(-90)" text-anchor="middle" fill="#1c2430">${this.yLabel}</text>
      </svg>
      <div class="legend">${this.series.map((s) => html`<span><span class="swatch" data-colour=${s.colour}></span>${s.label}</span>`)}</div>`;
  }
}
customElements.define('rf-line-plot', LinePlot);
