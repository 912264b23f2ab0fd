import { html, LitElement, css, nothing } from 'lit';
import { live } from 'lit/directives/live.js';
import { InputError } from '../core/errors';
import type { Geometry } from '../core/geometry/types';
import { checkGeometryMatchesData, validateGeometry } from '../core/geometry/validate';
import { viewCount } from '../core/geometry/types';
import { theme } from './theme';

/** A typed number, the raw text when it is not one (so the message can quote it), or nothing. */
function numberOrText(v: string): number | string | undefined {
  const t = v.trim();
  if (t === '') return undefined;
  const n = Number(t);
  return Number.isFinite(n) ? n : t;
}

/**
 * The scan's geometry as an editable form. Apply validates it (validateGeometry and the data's
 * sizes); a wrong value is refused with the reason and nothing changes.
 * @fires geometry-apply - detail: { geometry } (validated)
 */
export class GeometryForm extends LitElement {
  static properties = { geometry: { attribute: false }, error: { type: String }, localError: { state: true }, saved: { state: true }, kind: { state: true } };
  /** The stored geometry. */
  declare geometry: Geometry;
  /** A refusal from storage ('' when none). */
  declare error: string;
  declare localError: string;
  declare saved: boolean;
  /** The beam kind chosen in the form (decides which fields show). */
  declare kind: string;

  static styles = [theme, css`
    form { display: grid; grid-template-columns: repeat(auto-fill, minmax(170px, 1fr)); gap: 10px 14px; }
    .field { display: flex; flex-direction: column; gap: 3px; }
    input, select { width: 100%; }
    input[readonly] { background: var(--bg); color: var(--muted); }
    .row { display: flex; gap: 10px; align-items: center; margin-top: 12px; }
    .ok { color: var(--ok); font-size: 13px; }
  `];

  constructor() {
    super();
    this.error = '';
    this.localError = '';
    this.saved = false;
  }

  willUpdate(changed: Map<string, unknown>) {
    if (changed.has('geometry')) {
      this.kind = this.geometry?.kind;
      this.localError = '';
      this.saved = false;
    }
  }

  private value(name: string): string {
    return this.renderRoot.querySelector<HTMLInputElement | HTMLSelectElement>(`[name="${name}"]`)?.value ?? '';
  }

  private collect(): unknown {
    const g = this.geometry;
    const d = g.detector;
    const kind = this.value('kind');
    const out: Record<string, unknown> = {
      kind,
      detector: {
        shape: this.value('shape'),
        channels: d.channels,
        rows: d.rows,
        pitch: [numberOrText(this.value('pitchU')), numberOrText(this.value('pitchV'))],
        offset: [numberOrText(this.value('offsetU')), numberOrText(this.value('offsetV'))],
      },
    };
    if (kind !== 'parallel') {
      out.sourceIsocenter = numberOrText(this.value('sourceIsocenter'));
      out.sourceDetector = numberOrText(this.value('sourceDetector'));
    }
    if (g.views) out.views = g.views;
    if (Array.isArray(g.anglesDeg)) out.anglesDeg = g.anglesDeg;
    else if (g.anglesDeg) out.anglesDeg = { start: numberOrText(this.value('start')), step: numberOrText(this.value('step')), count: g.anglesDeg.count };
    return out;
  }

  private apply(e: Event) {
    e.preventDefault();
    try {
      const g = validateGeometry(this.collect());
      const d = this.geometry.detector;
      checkGeometryMatchesData(g, d.channels, d.rows, viewCount(this.geometry));
      this.localError = '';
      this.saved = true;
      this.dispatchEvent(new CustomEvent('geometry-apply', { detail: { geometry: g }, bubbles: true, composed: true }));
    } catch (err) {
      if (!(err instanceof InputError)) throw err;
      this.saved = false;
      this.localError = err.message;
    }
  }

  private field(label: string, name: string, value: unknown, opts: { readonly?: boolean; unit?: string } = {}) {
    return html`<label class="field">${label}${opts.unit ? ` (${opts.unit})` : ''}
      <input name=${name} .value=${live(value === undefined ? '' : String(value))} ?readonly=${opts.readonly} inputmode="decimal"
        @input=${() => (this.saved = false)}></label>`;
  }

  render() {
    const g = this.geometry;
    if (!g) return nothing;
    const d = g.detector;
    const a = g.anglesDeg;
    const message = this.localError || this.error;
    return html`<form @submit=${this.apply} novalidate>
        <label class="field">Beam
          <select name="kind" .value=${live(this.kind)} @change=${(e: Event) => { this.kind = (e.target as HTMLSelectElement).value; this.saved = false; }}>
            <option value="parallel">Parallel</option>
            <option value="fan">Fan</option>
            <option value="cone">Cone</option>
          </select></label>
        <label class="field">Detector shape
          <select name="shape" .value=${live(d.shape)}>
            <option value="flat">Flat</option>
            <option value="curved">Curved (equiangular)</option>
          </select></label>
        ${this.field('Channels', 'channels', d.channels, { readonly: true })}
        ${this.field('Rows', 'rows', d.rows, { readonly: true })}
        ${this.field('Channel pitch', 'pitchU', d.pitch[0], { unit: 'mm' })}
        ${this.field('Row pitch', 'pitchV', d.pitch[1], { unit: 'mm' })}
        ${this.field('Channel offset', 'offsetU', d.offset[0], { unit: 'mm' })}
        ${this.field('Row offset', 'offsetV', d.offset[1], { unit: 'mm' })}
        ${this.kind !== 'parallel' ? html`
          ${this.field('Source to centre', 'sourceIsocenter', g.sourceIsocenter, { unit: 'mm' })}
          ${this.field('Source to detector', 'sourceDetector', g.sourceDetector, { unit: 'mm' })}` : nothing}
        ${a && !Array.isArray(a) && !g.views ? html`
          ${this.field('First angle', 'start', a.start, { unit: '°' })}
          ${this.field('Angle step', 'step', a.step, { unit: '°' })}
          ${this.field('Views', 'count', a.count, { readonly: true })}` : nothing}
      </form>
      ${g.views ? html`<p class="muted">This scan has calibrated vectors for each of its ${g.views.length} views (${g.kind === 'parallel' ? 'ray direction' : 'focal spot'}, detector centre, channel step, row step); they are kept as they are.</p>` : nothing}
      ${Array.isArray(a) ? html`<p class="muted">The view angles are an explicit list of ${a.length} values; they are kept as they are.</p>` : nothing}
      <div class="row">
        <button class="primary" @click=${this.apply}>Apply geometry</button>
        <button @click=${() => { this.geometry = structuredClone(this.geometry); }}>Undo edits</button>
        ${this.saved && !message ? html`<span class="ok">Saved.</span>` : nothing}
      </div>
      ${message ? html`<div class="error" role="alert" id="geometry-error">Not applied: ${message}</div>` : nothing}`;
  }
}
customElements.define('rf-geometry-form', GeometryForm);
