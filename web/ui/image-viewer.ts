import { html, LitElement, css, nothing } from 'lit';
import { greyPixels, type DisplayImage } from './logic/display';
import { ellipseFromDrag, type Mark } from './logic/knowledge-draw';
import { pixelAt, type Point } from './logic/measure';
import { overlayPixels, UNDETERMINED_LEGEND, undeterminedAt } from './logic/undetermined-overlay';
import { INITIAL_VIEW, pan, scaleFor, toImage, toScreen, zoomAbout, type ViewState } from './logic/view-transform';
import { dragWindow, type DisplayWindow } from './logic/window-level';
import { theme } from './theme';

/**
 * What a left-button drag does ('slice': move the crosshair of a volume's planes; 'ellipse':
 * drag an outline from its centre; 'polygon': click the outline's corners, double-click to close).
 */
export type Tool = 'window' | 'move' | 'line' | 'region' | 'slice' | 'ellipse' | 'polygon';

export interface LineMark {
  p0: Point;
  p1: Point;
}

export interface RegionMark {
  centre: Point;
  radius: number;
}

const fire = (el: HTMLElement, name: string, detail: unknown) => el.dispatchEvent(new CustomEvent(name, { detail, bubbles: true, composed: true }));

/**
 * One image on a dark panel: window/level, zoom and pan, the value under the cursor, the
 * measured field of view, the shared line and region marks, and (for a result that leaves part
 * of the grid undetermined) an overlay over that part, whose pixels are not read as values. Linked panels share window,
 * view, cursor and marks through their parent (properties down, events up).
 * @fires window-change - detail: { window } while dragging with the window tool (or Ctrl)
 * @fires view-change - detail: { view } on wheel zoom, move drags (or Shift / middle button) and double-click (reset)
 * @fires cursor-change - detail: { point } (mm) or { point: null } when the pointer leaves
 * @fires line-change - detail: { line } while drawing with the line tool
 * @fires region-change - detail: { region } while drawing with the region tool
 * @fires crosshair-change - detail: { point } (mm) on press and drag with the slice tool
 * @fires ellipse-change - detail: { ellipse } (mm) while dragging with the ellipse tool
 * @fires polygon-point - detail: { point, snap } (mm) on each press with the polygon tool (snap: 6 screen pixels in mm)
 * @fires polygon-close - a double-click with the polygon tool
 * @fires panel-focus - the panel was clicked (it becomes the one exported)
 */
export class ImageViewer extends LitElement {
  static properties = {
    image: { attribute: false }, window: { attribute: false }, view: { attribute: false }, cursor: { attribute: false },
    tool: { type: String }, line: { attribute: false }, region: { attribute: false }, colour: { type: String },
    showFov: { type: Boolean }, active: { type: Boolean }, crosshair: { attribute: false }, marks: { attribute: false },
    showUndetermined: { type: Boolean },
  };
  /** The image in display units. */
  declare image: DisplayImage;
  declare window: DisplayWindow;
  declare view: ViewState;
  /** The shared cursor, mm (null: none). */
  declare cursor: Point | null;
  declare tool: Tool;
  declare line: LineMark | null;
  declare region: RegionMark | null;
  /** Colour identifying this panel in plots and tables. */
  declare colour: string;
  /** Draw the measured field of view. */
  declare showFov: boolean;
  /** This panel is the one exports use. */
  declare active: boolean;
  /** Where the other planes of a volume cut this one, mm (null: no crosshair). */
  declare crosshair: Point | null;
  /** Knowledge drawn over the image (known regions, the outline, its suggestion, drafts). */
  declare marks: Mark[];
  /** Draw the overlay over the pixels the image does not determine (when it has such a mask). */
  declare showUndetermined: boolean;

  private cache?: { values: Float32Array; width: number; level: number; canvas: HTMLCanvasElement };
  private overlayCache?: { mask: Uint8Array; canvas: HTMLCanvasElement };
  private size = { w: 0, h: 0 };
  private drag?: { mode: Tool; x: number; y: number; window: DisplayWindow; view: ViewState; p0: Point };
  private resize = new ResizeObserver(() => this.measure());
  private observed?: Element;

  static styles = [theme, css`
    .panel { position: relative; background: var(--panel); border-radius: 8px; overflow: hidden; aspect-ratio: 1 / 1; border: 2px solid transparent; }
    .panel.active { border-color: var(--swatch, #888); }
    canvas { position: absolute; inset: 0; width: 100%; height: 100%; touch-action: none; }
    .label { position: absolute; left: 6px; top: 6px; color: #e8ecf1; font-size: 12px; pointer-events: none; display: flex; gap: 6px; align-items: center; max-width: calc(100% - 12px); background: rgba(15, 19, 24, 0.72); padding: 2px 8px; border-radius: 4px; }
    .label span { overflow: hidden; text-overflow: ellipsis; white-space: nowrap; }
    .dot { width: 9px; height: 9px; border-radius: 50%; flex: none; }
    .corner { position: absolute; right: 6px; bottom: 6px; color: #c3ccd6; font-size: 11px; pointer-events: none; background: rgba(15, 19, 24, 0.72); padding: 1px 6px; border-radius: 4px; }
    .readout { font-size: 12px; color: var(--muted); min-height: 18px; margin-top: 4px; }
    .legend { position: absolute; left: 6px; top: 32px; max-width: calc(100% - 12px); color: #e8ecf1; font-size: 11px; pointer-events: none; display: flex; gap: 6px; align-items: center; background: rgba(15, 19, 24, 0.72); padding: 1px 6px; border-radius: 4px; }
    .legend span:last-child { overflow: hidden; text-overflow: ellipsis; white-space: nowrap; }
    .swatch { width: 12px; height: 10px; flex: none; border-radius: 2px; background: repeating-linear-gradient(135deg, rgba(178, 92, 255, 0.95) 0 2px, rgba(178, 92, 255, 0.45) 2px 5px); }
  `];

  constructor() {
    super();
    this.view = INITIAL_VIEW;
    this.cursor = null;
    this.tool = 'window';
    this.line = null;
    this.region = null;
    this.colour = '#888';
    this.showFov = true;
    this.active = false;
    this.crosshair = null;
    this.marks = [];
    this.showUndetermined = true;
  }

  disconnectedCallback() {
    super.disconnectedCallback();
    this.resize.disconnect();
    this.observed = undefined;
  }

  private measure() {
    const canvas = this.renderRoot.querySelector('canvas');
    if (!canvas) return;
    const r = canvas.getBoundingClientRect();
    const dpr = window.devicePixelRatio || 1;
    this.size = { w: r.width, h: r.height };
    canvas.width = Math.max(1, Math.round(r.width * dpr));
    canvas.height = Math.max(1, Math.round(r.height * dpr));
    this.draw();
  }

  updated() {
    const panel = this.renderRoot.querySelector('.panel');
    if (panel && panel !== this.observed) {
      if (this.observed) this.resize.unobserve(this.observed);
      this.resize.observe(panel);
      this.observed = panel;
    }
    this.renderRoot.querySelectorAll<HTMLElement>('.dot').forEach((d) => { d.style.background = this.colour; });
    this.renderRoot.querySelector<HTMLElement>('.panel')?.style.setProperty('--swatch', this.colour);
    this.draw();
  }

  /** The image drawn at its own resolution under the current window (cached). */
  private windowed(): HTMLCanvasElement {
    const g = this.image.grid, w = this.window, c = this.cache;
    if (c && c.values === this.image.values && c.width === w.width && c.level === w.level) return c.canvas;
    const canvas = c?.canvas ?? document.createElement('canvas');
    canvas.width = g.nx;
    canvas.height = g.ny;
    const rgba = greyPixels(this.image.values, g.nx, g.ny, w) as Uint8ClampedArray<ArrayBuffer>;
    canvas.getContext('2d')!.putImageData(new ImageData(rgba, g.nx, g.ny), 0, 0);
    this.cache = { values: this.image.values, width: w.width, level: w.level, canvas };
    return canvas;
  }

  /** The undetermined overlay at the image's own resolution (cached per mask). */
  private overlay(mask: Uint8Array): HTMLCanvasElement {
    const g = this.image.grid, c = this.overlayCache;
    if (c && c.mask === mask) return c.canvas;
    const canvas = c?.canvas ?? document.createElement('canvas');
    canvas.width = g.nx;
    canvas.height = g.ny;
    canvas.getContext('2d')!.putImageData(new ImageData(overlayPixels(mask, g.nx, g.ny) as Uint8ClampedArray<ArrayBuffer>, g.nx, g.ny), 0, 0);
    this.overlayCache = { mask, canvas };
    return canvas;
  }

  private overlayShown(): Uint8Array | undefined {
    return this.showUndetermined ? this.image.undetermined : undefined;
  }

  private draw() {
    const canvas = this.renderRoot.querySelector('canvas');
    if (!canvas || !this.image || !this.size.w) return;
    const { w, h } = this.size;
    const dpr = canvas.width / w;
    const ctx = canvas.getContext('2d')!;
    ctx.setTransform(dpr, 0, 0, dpr, 0, 0);
    ctx.fillStyle = '#0f1318';
    ctx.fillRect(0, 0, w, h);
    const g = this.image.grid;
    const s = scaleFor(g, w, h, this.view);
    // Top-left corner of the grid: smallest x, largest y (pixel edges, half a pixel beyond the centres).
    const corner = toScreen({ x: g.cx - (g.nx * g.dx) / 2, y: g.cy + (g.ny * g.dy) / 2 }, g, w, h, this.view);
    ctx.imageSmoothingEnabled = s * g.dx < 3;
    ctx.drawImage(this.windowed(), corner.x, corner.y, g.nx * g.dx * s, g.ny * g.dy * s);
    const mask = this.overlayShown();
    if (mask) {
      ctx.imageSmoothingEnabled = false;
      ctx.drawImage(this.overlay(mask), corner.x, corner.y, g.nx * g.dx * s, g.ny * g.dy * s);
    }
    const at = (p: Point) => toScreen(p, g, w, h, this.view);
    if (this.showFov && (this.image.fovRadius || this.image.outline)) this.drawFov(ctx, at, s);
    for (const m of this.marks) drawMark(ctx, m, at);
    if (this.crosshair) drawCrosshair(ctx, at(this.crosshair), w, h);
    if (this.line) drawLine(ctx, at(this.line.p0), at(this.line.p1));
    if (this.region) {
      const c = at(this.region.centre);
      ctx.strokeStyle = '#4ee0d0';
      ctx.lineWidth = 1.5;
      ctx.beginPath();
      ctx.arc(c.x, c.y, this.region.radius * s, 0, 2 * Math.PI);
      ctx.stroke();
    }
    if (this.cursor) drawCursor(ctx, at(this.cursor));
  }

  /** The measured field of view (circle) and the object's outline, dashed. */
  private drawFov(ctx: CanvasRenderingContext2D, at: (p: Point) => Point, s: number) {
    ctx.setLineDash([6, 5]);
    ctx.strokeStyle = 'rgba(111, 179, 224, 0.85)';
    ctx.lineWidth = 1.2;
    ctx.beginPath();
    if (this.image.fovRadius) {
      const c = at({ x: 0, y: 0 });
      ctx.arc(c.x, c.y, this.image.fovRadius * s, 0, 2 * Math.PI);
    }
    this.image.outline?.forEach((p, i) => {
      const q = at(p);
      if (i) ctx.lineTo(q.x, q.y);
      else ctx.moveTo(q.x, q.y);
    });
    if (this.image.outline) ctx.closePath();
    ctx.stroke();
    ctx.setLineDash([]);
  }

  private point(e: PointerEvent | WheelEvent | MouseEvent): { q: Point; p: Point } {
    const r = (e.currentTarget as HTMLElement).getBoundingClientRect();
    const q = { x: e.clientX - r.left, y: e.clientY - r.top };
    return { q, p: toImage(q, this.image.grid, this.size.w, this.size.h, this.view) };
  }

  private down(e: PointerEvent) {
    if (!this.image) return;
    fire(this, 'panel-focus', {});
    const mode: Tool = e.button === 1 || e.shiftKey ? 'move' : e.ctrlKey ? 'window' : this.tool;
    const { p } = this.point(e);
    (e.currentTarget as HTMLElement).setPointerCapture(e.pointerId);
    this.drag = { mode, x: e.clientX, y: e.clientY, window: this.window, view: this.view, p0: p };
    if (mode === 'slice') fire(this, 'crosshair-change', { point: p });
    if (mode === 'polygon') fire(this, 'polygon-point', { point: p, snap: 6 / scaleFor(this.image.grid, this.size.w, this.size.h, this.view) });
    e.preventDefault();
  }

  private move(e: PointerEvent) {
    if (!this.image) return;
    const { p } = this.point(e);
    fire(this, 'cursor-change', { point: p });
    const d = this.drag;
    if (!d) return;
    const dx = e.clientX - d.x, dy = e.clientY - d.y;
    if (d.mode === 'window') fire(this, 'window-change', { window: dragWindow(d.window, dx, dy) });
    else if (d.mode === 'move') fire(this, 'view-change', { view: pan(d.view, dx, dy, this.image.grid, this.size.w, this.size.h) });
    else if (d.mode === 'line') fire(this, 'line-change', { line: { p0: d.p0, p1: p } });
    else if (d.mode === 'slice') fire(this, 'crosshair-change', { point: p });
    else if (d.mode === 'ellipse') fire(this, 'ellipse-change', { ellipse: ellipseFromDrag(d.p0, p) });
    else if (d.mode === 'polygon') return;
    else fire(this, 'region-change', { region: { centre: d.p0, radius: Math.hypot(p.x - d.p0.x, p.y - d.p0.y) } });
  }

  private up(e: PointerEvent) {
    this.drag = undefined;
    (e.currentTarget as HTMLElement).releasePointerCapture?.(e.pointerId);
  }

  private wheel(e: WheelEvent) {
    if (!this.image) return;
    e.preventDefault();
    const { q } = this.point(e);
    fire(this, 'view-change', { view: zoomAbout(this.view, Math.exp(-e.deltaY / 500), q, this.image.grid, this.size.w, this.size.h) });
  }

  render() {
    if (!this.image) return nothing;
    const v = this.cursor ? pixelAt(this.image.values, this.image.grid, this.cursor) : NaN;
    const unit = this.image.unit;
    const axes = this.image.axes ?? ['x', 'y'];
    const fmt = (x: number) => (unit === 'HU' ? x.toFixed(0) : x.toPrecision(4));
    const mask = this.image.undetermined;
    const value = () => {
      if (mask && undeterminedAt(mask, this.image.grid, this.cursor!)) return 'not determined (no value: filled with air)';
      return Number.isFinite(v) ? `${fmt(v)} ${unit}` : 'outside the image';
    };
    return html`<div class="panel ${this.active ? 'active' : ''}">
        <canvas aria-label=${`Image: ${this.image.label}`}
          @pointerdown=${this.down} @pointermove=${this.move} @pointerup=${this.up} @pointercancel=${this.up}
          @pointerleave=${() => fire(this, 'cursor-change', { point: null })}
          @wheel=${this.wheel} @dblclick=${() => (this.tool === 'polygon' ? fire(this, 'polygon-close', {})
            : fire(this, 'view-change', { view: { zoom: 1, centre: { x: this.image.grid.cx, y: this.image.grid.cy } } }))}
          @contextmenu=${(e: Event) => e.preventDefault()}></canvas>
        <div class="label"><span class="dot"></span><span>${this.image.label}</span></div>
        <div class="corner num">W ${fmt(this.window.width)} · L ${fmt(this.window.level)} ${unit}</div>
        ${this.overlayShown() ? html`<div class="legend" id="undetermined-legend"><span class="swatch"></span><span>${UNDETERMINED_LEGEND}</span></div>` : nothing}
      </div>
      <div class="readout num">${this.cursor
        ? html`${axes[0]} ${this.cursor.x.toFixed(1)} mm, ${axes[1]} ${this.cursor.y.toFixed(1)} mm: <strong>${value()}</strong>`
        : html`&nbsp;`}</div>`;
  }
}
customElements.define('rf-image-viewer', ImageViewer);

const MARK_COLOURS: Record<Mark['style'], string> = { known: '#5ee08a', outline: '#ff9f43', suggested: '#e8d44d', draft: '#ffffff' };

/** A knowledge mark: its rings (solid; the suggestion and drafts dashed) and its label (screen px from `at`). */
function drawMark(ctx: CanvasRenderingContext2D, m: Mark, at: (p: Point) => Point) {
  ctx.strokeStyle = MARK_COLOURS[m.style];
  ctx.lineWidth = m.style === 'draft' ? 1.2 : 1.6;
  ctx.setLineDash(m.style === 'suggested' || m.style === 'draft' ? [5, 4] : []);
  ctx.beginPath();
  for (const ring of m.rings) {
    ring.forEach((p, i) => {
      const q = at(p);
      if (i) ctx.lineTo(q.x, q.y);
      else ctx.moveTo(q.x, q.y);
    });
    if (m.closed) ctx.closePath();
  }
  ctx.stroke();
  ctx.setLineDash([]);
  if (m.label && m.at) {
    const q = at(m.at);
    ctx.fillStyle = MARK_COLOURS[m.style];
    ctx.font = 'bold 12px system-ui, sans-serif';
    ctx.fillText(m.label, q.x + 3, q.y - 3);
  }
}

/** The linked cursor of the other panels: a horizontal and a vertical line through c (screen px). */
function drawCrosshair(ctx: CanvasRenderingContext2D, c: Point, w: number, h: number) {
  ctx.strokeStyle = 'rgba(255, 176, 64, 0.75)';
  ctx.lineWidth = 1;
  ctx.beginPath();
  ctx.moveTo(0, c.y);
  ctx.lineTo(w, c.y);
  ctx.moveTo(c.x, 0);
  ctx.lineTo(c.x, h);
  ctx.stroke();
}

/** The profile line from a to b with its end handles (screen px). */
function drawLine(ctx: CanvasRenderingContext2D, a: Point, b: Point) {
  ctx.strokeStyle = '#ffd24a';
  ctx.lineWidth = 1.5;
  ctx.beginPath();
  ctx.moveTo(a.x, a.y);
  ctx.lineTo(b.x, b.y);
  ctx.stroke();
  ctx.fillStyle = '#ffd24a';
  for (const q of [a, b]) ctx.fillRect(q.x - 2.5, q.y - 2.5, 5, 5);
}

/** This panel's cursor: a small open cross at c (screen px). */
function drawCursor(ctx: CanvasRenderingContext2D, c: Point) {
  ctx.strokeStyle = 'rgba(255,255,255,0.8)';
  ctx.lineWidth = 1;
  ctx.beginPath();
  for (const [dx, dy] of [[-1, 0], [1, 0], [0, -1], [0, 1]]) {
    ctx.moveTo(c.x + 2 * dx, c.y + 2 * dy);
    ctx.lineTo(c.x + 7 * dx, c.y + 7 * dy);
  }
  ctx.stroke();
}
