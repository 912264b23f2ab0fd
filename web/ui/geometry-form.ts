import { html, LitElement, css, nothing } from 'lit';
import { live } from 'lit/directives/live.js';
import { InputError } from '../core/errors';
import type { Geometry } from '../core/geometry/types';
import { checkDraft, draftErrors, draftOf, GEOMETRY_FIELDS, type GeometryDraft } from './logic/geometry-draft';
import { theme } from './theme';

const FIELD = Object.fromEntries(GEOMETRY_FIELDS.map((f) => [f.name, f]));

/**
 * The scan's geometry as an editable form. Every edit is kept as typed; each wrong field is
 * marked with its own message (geometry-draft.ts, validateGeometry's rules and the data's sizes);
 * Apply sends the geometry only when every field is valid, and nothing changes otherwise.
 * @fires geometry-apply - detail: { geometry } (validated)
 */
export class GeometryForm extends LitElement {
  static properties = {
    geometry: { attribute: false }, error: { type: String }, draft: { state: true }, errors: { state: true }, tried: { state: true }, saved: { state: true },
  };
  /** The stored geometry. */
  declare geometry: Geometry;
  /** A refusal from storage ('' when none). */
  declare error: string;
  /** The form's text as typed, by field name. */
  declare draft: GeometryDraft;
  /** Messages by field name ('form' for one that concerns no single field). */
  declare errors: Record<string, string>;
  /** Apply was pressed since the last clean state (the summary line shows). */
  declare tried: boolean;
  declare saved: boolean;

  static styles = [theme, css`
    form { display: grid; grid-template-columns: repeat(auto-fill, minmax(170px, 1fr)); gap: 10px 14px; }
    .field { display: flex; flex-direction: column; gap: 3px; }
    input, select { width: 100%; }
    input[readonly] { background: var(--bg); color: var(--muted); }
    [aria-invalid='true'] { border-color: var(--danger); background: var(--danger-soft); }
    .field-error { color: var(--danger); font-size: 12px; }
    .row { display: flex; gap: 10px; align-items: center; margin-top: 12px; }
    .ok { color: var(--ok); font-size: 13px; }
  `];

  constructor() {
    super();
    this.error = '';
    this.draft = {};
    this.errors = {};
    this.tried = false;
    this.saved = false;
  }

  willUpdate(changed: Map<string, unknown>) {
    if (changed.has('geometry') && this.geometry) this.reset();
  }

  private reset() {
    this.draft = draftOf(this.geometry);
    this.errors = {};
    this.tried = false;
  }

  private edit(name: string, value: string) {
    this.draft = { ...this.draft, [name]: value };
    this.errors = draftErrors(this.geometry, this.draft);
    this.saved = false;
  }

  private apply(e: Event) {
    e.preventDefault();
    this.tried = true;
    this.errors = draftErrors(this.geometry, this.draft);
    if (Object.keys(this.errors).length) {
      this.saved = false;
      return;
    }
    try {
      const geometry = checkDraft(this.geometry, this.draft);
      this.saved = true;
      this.dispatchEvent(new CustomEvent('geometry-apply', { detail: { geometry }, bubbles: true, composed: true }));
    } catch (err) {
      if (!(err instanceof InputError)) throw err;
      this.errors = { form: err.message };
    }
  }

  private field(name: string, value: string | number, readonly = false) {
    const f = FIELD[name] ?? { label: name === 'count' ? 'Views' : name === 'channels' ? 'Channels' : 'Rows', unit: undefined };
    const message = this.errors[name];
    return html`<label class="field">${f.label}${f.unit ? ` (${f.unit})` : ''}
      <input name=${name} .value=${live(readonly ? String(value) : this.draft[name] ?? '')} ?readonly=${readonly} inputmode="decimal"
        aria-invalid=${message ? 'true' : 'false'} aria-describedby=${message ? `error-${name}` : nothing}
        @input=${(e: Event) => this.edit(name, (e.target as HTMLInputElement).value)}>
      ${message ? html`<span class="field-error" id=${`error-${name}`}>${message}</span>` : nothing}</label>`;
  }

  private choice(name: 'kind' | 'shape', options: Array<[string, string]>) {
    const message = this.errors[name];
    return html`<label class="field">${FIELD[name].label}
      <select name=${name} .value=${live(this.draft[name] ?? '')} aria-invalid=${message ? 'true' : 'false'} @change=${(e: Event) => this.edit(name, (e.target as HTMLSelectElement).value)}>
        ${options.map(([v, label]) => html`<option value=${v} ?selected=${this.draft[name] === v}>${label}</option>`)}
      </select>
      ${message ? html`<span class="field-error" id=${`error-${name}`}>${message}</span>` : nothing}</label>`;
  }

  render() {
    const g = this.geometry;
    if (!g) return nothing;
    const d = g.detector;
    const a = g.anglesDeg;
    const wrong = Object.keys(this.errors).filter((k) => k !== 'form').map((k) => FIELD[k]?.label ?? k);
    const message = this.errors.form || this.error || (this.tried && wrong.length ? `${wrong.length === 1 ? 'this field is' : 'these fields are'} not valid: ${wrong.join(', ')}` : '');
    return html`<form @submit=${this.apply} novalidate>
        ${this.choice('kind', [['parallel', 'Parallel'], ['fan', 'Fan'], ['cone', 'Cone']])}
        ${this.choice('shape', [['flat', 'Flat'], ['curved', 'Curved (equiangular)']])}
        ${this.field('channels', d.channels, true)}
        ${this.field('rows', d.rows, true)}
        ${this.field('pitchU', '')}
        ${this.field('pitchV', '')}
        ${this.field('offsetU', '')}
        ${this.field('offsetV', '')}
        ${this.draft.kind !== 'parallel' ? html`${this.field('sourceIsocenter', '')}${this.field('sourceDetector', '')}` : nothing}
        ${a && !Array.isArray(a) && !g.views ? html`${this.field('start', '')}${this.field('step', '')}${this.field('count', a.count, true)}` : nothing}
      </form>
      ${g.views ? html`<p class="muted">This scan has calibrated vectors for each of its ${g.views.length} views (${g.kind === 'parallel' ? 'ray direction' : 'focal spot'}, detector centre, channel step, row step); they are kept as they are.</p>` : nothing}
      ${Array.isArray(a) ? html`<p class="muted">The view angles are an explicit list of ${a.length} values; they are kept as they are.</p>` : nothing}
      <div class="row">
        <button class="primary" @click=${this.apply}>Apply geometry</button>
        <button @click=${() => this.reset()}>Undo edits</button>
        ${this.saved && !message ? html`<span class="ok">Saved.</span>` : nothing}
      </div>
      ${message ? html`<div class="error" role="alert" id="geometry-error">Not applied: ${message}</div>` : nothing}`;
  }
}
customElements.define('rf-geometry-form', GeometryForm);
