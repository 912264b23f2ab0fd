import { html, LitElement, css, nothing } from 'lit';
import { live } from 'lit/directives/live.js';
import type { SuggestedOutline } from '../core/completion/suggested-outline';
import { describeOutline } from '../core/knowledge';
import type { ScanKnowledge } from '../store/records';
import type { KnowledgeRequest } from '../worker/app-protocol';
import type { KnowledgeOn } from './known-regions';
import { closePolygon, EMPTY_POLYGON, undoPolygonPoint, type EllipseDraft, type PolygonDraft } from './logic/knowledge-draw';
import { ellipseFromFields, fieldsOfEllipse, readNumber, type EllipseFields } from './logic/knowledge-form';
import { theme } from './theme';

const send = (el: HTMLElement, name: string, detail: unknown = {}) => el.dispatchEvent(new CustomEvent(name, { detail, bubbles: true, composed: true }));

const EMPTY: EllipseFields = { cx: '', cy: '', a: '', b: '', angle: '' };

/**
 * The object's outline kept with a scan: shown with where it came from, deletable; set as an
 * ellipse (dragged with the Ellipse tool or typed, mm), a polygon clicked with the Polygon tool,
 * a threshold of the highlighted image, or a mask file. The outline the data suggest is offered
 * as a start to correct.
 * @fires knowledge-change - detail: { request } (a KnowledgeRequest for the coordinator)
 * @fires ellipse-draft - detail: { ellipse }: the typed ellipse, so the panels draw it
 * @fires polygon-draft - detail: { polygon }: the polygon closed, with a corner less, or cleared
 */
export class OutlineEditor extends LitElement {
  static properties = {
    scanId: { type: String }, knowledge: { attribute: false }, ellipse: { attribute: false }, polygon: { attribute: false },
    suggested: { attribute: false }, on: { attribute: false }, onLabel: { type: String }, busy: { type: Boolean },
    fields: { state: true }, level: { state: true }, problem: { state: true }, confirming: { state: true },
  };
  declare scanId: string;
  declare knowledge: ScanKnowledge | undefined;
  /** The ellipse dragged with the Ellipse tool (null: none). */
  declare ellipse: EllipseDraft | null;
  /** The polygon clicked with the Polygon tool. */
  declare polygon: PolygonDraft;
  /** The outline the views' edges suggest (null: the views do not go round the object). */
  declare suggested: SuggestedOutline | null | undefined;
  /** The highlighted image (thresholded; the check looks at it). */
  declare on: KnowledgeOn;
  /** Its name, in words. */
  declare onLabel: string;
  declare busy: boolean;
  declare fields: EllipseFields;
  /** Threshold level, HU (text as typed). */
  declare level: string;
  declare problem: string;
  declare confirming: boolean;

  static styles = [theme, css`
    :host { display: block; }
    .current { font-size: 13px; border: 1px solid var(--border); border-radius: 8px; padding: 6px 8px; margin-bottom: 8px; overflow-wrap: anywhere; }
    .sub { font-size: 12px; color: var(--muted); overflow-wrap: anywhere; }
    .row { display: flex; flex-wrap: wrap; gap: 6px; align-items: center; margin-top: 6px; font-size: 13px; }
    .row input[type='number'] { width: 74px; }
    .way { margin-top: 10px; padding-top: 8px; border-top: 1px solid var(--border); }
    .way:first-of-type { border-top: none; padding-top: 0; }
    .swatch { display: inline-block; width: 18px; border-top: 2px dashed #c9b52e; vertical-align: middle; margin: 0 4px; }
    .problem { font-size: 12px; color: var(--danger); margin: 4px 0 0; }
    input[type='file'] { font-size: 12px; max-width: 100%; }
  `];

  constructor() {
    super();
    this.scanId = '';
    this.knowledge = undefined;
    this.ellipse = null;
    this.polygon = EMPTY_POLYGON;
    this.suggested = undefined;
    this.on = undefined;
    this.onLabel = '';
    this.busy = false;
    this.fields = EMPTY;
    this.level = '-500';
    this.problem = '';
    this.confirming = false;
  }

  willUpdate(changed: Map<string, unknown>) {
    // A dragged ellipse fills the fields (unless they already say it).
    const e = this.ellipse;
    if (changed.has('ellipse') && e) {
      const typed = ellipseFromFields(this.fields).value;
      if (!typed || [typed.cx - e.cx, typed.cy - e.cy, typed.a - e.a, typed.b - e.b, (typed.angleDeg ?? 0) - (e.angleDeg ?? 0)].some((d) => Math.abs(d) > 0.05)) this.fields = fieldsOfEllipse(e);
    }
  }

  private change(request: KnowledgeRequest) {
    this.problem = '';
    send(this, 'knowledge-change', { request });
  }

  private type(key: keyof EllipseFields, value: string) {
    this.fields = { ...this.fields, [key]: value };
    this.problem = '';
    const e = ellipseFromFields(this.fields).value;
    if (e) send(this, 'ellipse-draft', { ellipse: e });
  }

  private setEllipse(source: 'drawn' | 'typed') {
    const e = ellipseFromFields(this.fields);
    if (e.problem !== undefined) this.problem = e.problem;
    else this.change({ kind: 'set-outline', scanId: this.scanId, outline: e.value, source, on: this.on });
  }

  private startFromSuggestion() {
    if (!this.suggested) return;
    this.fields = fieldsOfEllipse(this.suggested.ellipse);
    send(this, 'ellipse-draft', { ellipse: this.suggested.ellipse });
  }

  private polygonAction(what: 'close' | 'undo' | 'clear') {
    if (what === 'close') {
      const c = closePolygon(this.polygon);
      if (c.problem) this.problem = `Polygon: ${c.problem}`;
      else send(this, 'polygon-draft', { polygon: c.draft });
      return;
    }
    send(this, 'polygon-draft', { polygon: what === 'undo' ? undoPolygonPoint(this.polygon) : EMPTY_POLYGON });
  }

  private threshold() {
    const level = readNumber(this.level, 'Threshold', 'HU');
    if (level.problem !== undefined) this.problem = level.problem;
    else if (this.on) this.change({ kind: 'threshold-outline', scanId: this.scanId, image: this.on, levelHu: level.value });
  }

  private maskFile(e: Event) {
    const input = e.target as HTMLInputElement;
    const files = [...(input.files ?? [])];
    input.value = '';
    if (files.length) this.change({ kind: 'mask-file', scanId: this.scanId, files, use: { as: 'outline' }, on: this.on });
  }

  private current() {
    const o = this.knowledge?.outline;
    if (!o) return html`<p class="sub">None yet. The object's outline (nothing but air outside it) sets how much the cut-off views miss.</p>`;
    return html`<div class="current" id="current-outline"><div>${describeOutline(o.outline)}</div><div class="sub">${o.source}</div>
      <div class="row">${this.confirming
        ? html`<button class="small danger" @click=${() => { this.confirming = false; this.change({ kind: 'delete-outline', scanId: this.scanId }); }}>Delete</button>
          <button class="small" @click=${() => (this.confirming = false)}>Keep</button>`
        : html`<button class="small danger" @click=${() => (this.confirming = true)}>Delete…</button>`}</div></div>`;
  }

  render() {
    const f = this.fields;
    const field = (key: keyof EllipseFields, label: string, unit: string) =>
      html`<label>${label} <input type="number" name=${`outline-${key}`} step="any" .value=${live(f[key])} @input=${(e: Event) => this.type(key, (e.target as HTMLInputElement).value)}> ${unit}</label>`;
    const s = this.suggested;
    const p = this.polygon;
    return html`<h3>Outline</h3>
      ${this.current()}
      <div class="way">
        <div class="row">${field('cx', 'centre x', 'mm')}${field('cy', 'y', 'mm')}</div>
        <div class="row">${field('a', 'semi-axes', '')}${field('b', '×', 'mm')}${field('angle', 'turned', '°')}</div>
        <div class="row"><button class="small primary" id="set-outline-ellipse" ?disabled=${this.busy} @click=${() => this.setEllipse(this.ellipse ? 'drawn' : 'typed')}>Set the ellipse as outline</button></div>
        <p class="sub">Drag with the Ellipse tool from the object's centre, or type it (a tape measure's width and depth halved).</p>
      </div>
      ${s ? html`<div class="way" id="suggested-outline"><p class="sub">The data suggest<span class="swatch"></span>an ellipse at ${s.ellipse.cx}, ${s.ellipse.cy} mm, semi-axes ${s.ellipse.a} × ${s.ellipse.b} mm${s.ellipse.angleDeg ? `, turned ${s.ellipse.angleDeg}°` : ''}
          (${Math.round(100 * s.estimatedShare)}% of it from water cylinder fits to cut-off edges, the rest where the views fall to air).</p>
        <div class="row"><button class="small" id="start-from-suggestion" @click=${this.startFromSuggestion}>Start from it</button>
          <button class="small" ?disabled=${this.busy} @click=${() => this.change({ kind: 'set-outline', scanId: this.scanId, outline: s.polygon, source: 'suggested by the data', on: this.on })}>Take its polygon</button></div></div>` : nothing}
      <div class="way">
        <p class="sub" id="polygon-status">Polygon tool: ${p.points.length ? `${p.points.length} corners${p.closed ? ', closed' : ''}` : 'click the corners of the object'}.</p>
        <div class="row">
          <button class="small" ?disabled=${p.closed || p.points.length < 3} @click=${() => this.polygonAction('close')}>Close</button>
          <button class="small" ?disabled=${!p.points.length} @click=${() => this.polygonAction('undo')}>Undo corner</button>
          <button class="small" ?disabled=${!p.points.length} @click=${() => this.polygonAction('clear')}>Clear</button>
          <button class="small primary" id="set-outline-polygon" ?disabled=${!p.closed || this.busy}
            @click=${() => this.change({ kind: 'set-outline', scanId: this.scanId, outline: { shape: 'polygon', points: p.points.map((q) => [q.x, q.y]) }, source: 'drawn', on: this.on })}>Set the polygon as outline</button></div>
      </div>
      <div class="way">
        <div class="row"><label>Threshold the highlighted image at <input type="number" name="outline-level" step="10" .value=${live(this.level)} @input=${(e: Event) => { this.level = (e.target as HTMLInputElement).value; }}> HU</label>
          <button class="small" id="threshold-outline" ?disabled=${!this.on || this.busy} @click=${this.threshold}>Take the outline</button></div>
        <p class="sub">${this.on ? `Of ${this.onLabel}: ` : 'Highlight an image first: '}an earlier full-field scan or a scout reconstruction added as an image; holes are filled, specks dropped.</p>
        <div class="row"><label>Or a mask file <input type="file" id="outline-mask-file" ?disabled=${this.busy} @change=${this.maskFile}></label></div>
      </div>
      ${this.problem ? html`<p class="problem" role="alert">${this.problem}</p>` : nothing}`;
  }
}
customElements.define('rf-outline-editor', OutlineEditor);
