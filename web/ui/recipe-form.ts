import { html, LitElement, css, nothing } from 'lit';
import { live } from 'lit/directives/live.js';
import { InputError } from '../core/errors';
import type { ImageGrid } from '../core/image';
import { describeRecipeFields, type RecipeField } from '../core/recipe/fields';
import { recipeLabel } from '../core/recipe/label';
import { DEFAULT_GRID_SIZE } from '../core/recipe/grid';
import { DEFAULT_VOLUME_SIZE } from '../core/recipe/volume-grid';
import type { Reduction } from '../core/reduction';
import './reduction-input';
import { DEFAULT_RECIPE, validateRecipe } from '../core/recipe/recipe';
import type { CorrectionAdvice } from '../core/truncation/recommend';
import type { ScanKnowledge } from '../store/records';
import { knowledgeItems, knowledgeProblem, recipeKnowledge } from './logic/recipe-knowledge';
import { theme } from './theme';

type GridMode = 'auto' | 'reference' | 'custom';

/** Value prefix of a prior choice that names a stored result. */
const RESULT_PRIOR = 'result:';

/**
 * A recipe form generated from the recipe module's field descriptions (core/recipe/fields.ts):
 * new methods and options appear here as they are added there.
 * @fires recipe-queue - detail: { recipe, name }, a validated recipe to run
 */
export class RecipeForm extends LitElement {
  static properties = {
    referenceGrid: { attribute: false }, disabled: { type: Boolean }, cone: { type: Boolean }, priorResults: { attribute: false },
    advice: { attribute: false }, defaultGrid: { type: String }, knowledge: { attribute: false },
    values: { state: true }, off: { state: true }, gridMode: { state: true }, error: { state: true }, slicesMode: { state: true }, reduce: { state: true },
  };
  /** Grid of the scan's reference image, offered as "match the ground truth" (undefined: none). */
  declare referenceGrid: ImageGrid | undefined;
  /** No scan chosen. */
  declare disabled: boolean;
  /** The chosen scan is cone beam: the form offers the volume's slices. */
  declare cone: boolean;
  /** Stored results the prior-guided method can start from (volumes for a cone-beam scan, else images). */
  declare priorResults: Array<{ id: string; label: string }>;
  /** The correction the scan's truncation report suggests; the form starts with it and says why. */
  declare advice: CorrectionAdvice | undefined;
  /** The grid a recipe without one gets, in words ("512 px × 1.29 mm"). */
  declare defaultGrid: string;
  /** What the user knows about the scan's object (kept with the scan); ticked items go into the recipe. */
  declare knowledge: ScanKnowledge | undefined;
  /** Knowledge items left out of the recipe (region ids, 'outline'). */
  declare off: ReadonlySet<string>;
  declare slicesMode: 'auto' | 'custom';
  /** Binning, view step and rows for this run (reduction.ts). */
  declare reduce: Reduction;
  declare values: Record<string, unknown>;
  declare gridMode: GridMode;
  declare error: string;
  private readonly fields: RecipeField[] = describeRecipeFields();
  private customGrid = { size: 512, pixel: 1 };
  private customSlices = { slices: 64, spacing: 2 };

  static styles = [theme, css`
    form { display: grid; grid-template-columns: repeat(auto-fill, minmax(220px, 1fr)); gap: 12px 16px; }
    .field { display: flex; flex-direction: column; gap: 3px; }
    .field.wide { grid-column: 1 / -1; }
    .help { font-size: 12px; color: var(--muted); }
    select, input { width: 100%; }
    .grid-choices { display: flex; flex-direction: column; gap: 6px; font-size: 13px; }
    .grid-choices label { color: var(--text); display: flex; gap: 7px; align-items: center; }
    .grid-choices input[type='radio'] { width: auto; margin: 0; }
    .grid-choices input[type='number'] { width: 90px; }
    .custom { display: flex; gap: 10px; align-items: center; flex-wrap: wrap; }
    .actions { display: flex; gap: 10px; align-items: center; margin-top: 14px; }
    .summary { font-size: 13px; color: var(--muted); }
    .advice { font-size: 12px; color: var(--text); }
    .knowledge { display: flex; flex-direction: column; gap: 4px; font-size: 13px; }
    .knowledge label { color: var(--text); display: flex; gap: 7px; align-items: flex-start; overflow-wrap: anywhere; }
    .knowledge input { width: auto; margin: 3px 0 0; }
  `];

  constructor() {
    super();
    this.referenceGrid = undefined;
    this.disabled = false;
    this.values = { ...(DEFAULT_RECIPE as unknown as Record<string, unknown>) };
    this.gridMode = 'auto';
    this.error = '';
    this.cone = false;
    this.slicesMode = 'auto';
    this.reduce = {};
    this.priorResults = [];
    this.advice = undefined;
    this.defaultGrid = '';
    this.knowledge = undefined;
    this.off = new Set();
  }

  willUpdate(changed: Map<string, unknown>) {
    // A new suggestion (another scan, another report) sets the correction; the same one keeps the user's choice.
    const before = changed.get('advice') as CorrectionAdvice | undefined;
    if (changed.has('advice') && this.advice && this.advice.extend !== before?.extend) this.values = { ...this.values, extend: this.advice.extend };
    if (changed.has('referenceGrid')) this.gridMode = this.referenceGrid ? 'reference' : this.gridMode === 'reference' ? 'auto' : this.gridMode;
  }

  /** The recipe as the form stands (not yet validated). */
  recipe(): Record<string, unknown> {
    const r: Record<string, unknown> = {};
    const knowledge = recipeKnowledge(this.knowledge, this.off);
    if (knowledge) r.knowledge = knowledge;
    for (const f of this.fields) {
      if (f.kind === 'grid') continue;
      if (f.appliesTo && !f.appliesTo(this.values)) continue;
      if (this.values[f.key] !== undefined) r[f.key] = this.values[f.key];
    }
    const g = this.referenceGrid;
    if (this.gridMode === 'reference' && g) r.grid = { size: g.nx, pixel: g.dx };
    if (this.gridMode === 'custom') r.grid = { ...this.customGrid };
    if (this.cone && this.slicesMode === 'custom') r.volume = { ...this.customSlices };
    if (Object.keys(this.reduce).length) r.reduce = { ...this.reduce };
    if (typeof r.prior === 'string' && r.prior.startsWith(RESULT_PRIOR)) {
      const id = r.prior.slice(RESULT_PRIOR.length);
      const chosen = this.priorResults.find((p) => p.id === id);
      r.prior = chosen ? { source: 'image', resultId: id, name: chosen.label } : undefined;
    }
    return r;
  }

  private set(key: string, value: unknown) {
    this.values = { ...this.values, [key]: value };
    this.error = '';
  }

  private input(f: RecipeField) {
    const v = this.values[f.key];
    const id = `field-${f.key}`;
    switch (f.kind) {
      case 'choice': {
        // The prior may also be a stored result (listed by the page, not by the field).
        const extra = f.key === 'prior' ? this.priorResults.map((p) => ({ value: `${RESULT_PRIOR}${p.id}`, label: `Stored result: ${p.label}` })) : [];
        const recipe = this.recipe();
        const choices = [...f.choices.filter((c) => !c.when || c.when(recipe)), ...extra];
        const shown = String(v !== undefined && choices.some((c) => c.value === v) ? v : f.defaultOf?.(this.values) ?? f.choices[0]?.value ?? '');
        return html`<select id=${id} name=${f.key} .value=${live(shown)} @change=${(e: Event) => this.set(f.key, (e.target as HTMLSelectElement).value)}>
          ${choices.map((c) => html`<option value=${c.value} ?selected=${c.value === shown}>${c.label}</option>`)}</select>`;
      }
      case 'number':
      case 'integer':
        return html`<input id=${id} name=${f.key} type="number" min=${f.min} max=${f.max} step=${f.step} .value=${live(v === undefined ? '' : String(v))}
          placeholder=${f.defaultOf ? `default ${f.defaultOf(this.values)}` : ''}
          @input=${(e: Event) => { const t = (e.target as HTMLInputElement).value; this.set(f.key, t === '' ? undefined : Number(t)); }}>`;
      case 'text':
        return html`<input id=${id} name=${f.key} .value=${live(String(v ?? ''))} @input=${(e: Event) => this.set(f.key, (e.target as HTMLInputElement).value)}>`;
      case 'grid':
        return this.gridInput();
    }
  }

  private gridInput() {
    const g = this.referenceGrid;
    const mode = (m: GridMode) => () => { this.gridMode = m; this.error = ''; };
    return html`<div class="grid-choices" role="radiogroup" aria-label="Image grid">
      <label><input type="radio" name="grid" value="auto" .checked=${live(this.gridMode === 'auto')} @change=${mode('auto')}>Cover the measured field of view and the estimated object (${this.defaultGrid || `${this.cone ? DEFAULT_VOLUME_SIZE : DEFAULT_GRID_SIZE} px`}, as the command line picks it)</label>
      ${g ? html`<label><input type="radio" name="grid" value="reference" .checked=${live(this.gridMode === 'reference')} @change=${mode('reference')}>Match the ground truth: ${g.nx} px × ${g.dx} mm</label>` : nothing}
      <div class="custom"><label><input type="radio" name="grid" value="custom" .checked=${live(this.gridMode === 'custom')} @change=${mode('custom')}>Choose:</label>
      <label>size <input type="number" name="gridSize" min="8" max="4096" step="1" .value=${live(String(this.customGrid.size))} ?disabled=${this.gridMode !== 'custom'}
        @input=${(e: Event) => { this.customGrid = { ...this.customGrid, size: Number((e.target as HTMLInputElement).value) }; this.requestUpdate(); }}> px</label>
      <label>pixel <input type="number" name="gridPixel" min="0.01" max="100" step="0.05" .value=${live(String(this.customGrid.pixel))} ?disabled=${this.gridMode !== 'custom'}
        @input=${(e: Event) => { this.customGrid = { ...this.customGrid, pixel: Number((e.target as HTMLInputElement).value) }; this.requestUpdate(); }}> mm</label></div>
    </div>`;
  }

  /** The knowledge kept with the scan, each item ticked to go into the recipe. */
  private knowledgeInput() {
    const items = knowledgeItems(this.knowledge);
    const tick = (key: string, on: boolean) => {
      const next = new Set(this.off);
      if (on) next.delete(key);
      else next.add(key);
      this.off = next;
      this.error = '';
    };
    return html`<div class="field wide"><label>Knowledge beyond the data</label>
      ${items.length ? html`<div class="knowledge" role="group" aria-label="Knowledge beyond the data">${items.map((i) => html`<label>
          <input type="checkbox" name="knowledge-item" data-key=${i.key} .checked=${live(!this.off.has(i.key))} @change=${(e: Event) => tick(i.key, (e.target as HTMLInputElement).checked)}>
          <span>${i.words}<br><span class="help">${i.source}</span></span></label>`)}</div>`
        : html`<span class="help" id="no-knowledge">None kept with this scan: draw a region of known value or the object's outline on an image in the Images tab.</span>`}
      <span class="help">What you know about the object settles what the truncated data leave open; unticked items stay with the scan.</span></div>`;
  }

  /** The slices of a cone-beam volume: automatic (the measured field's height) or chosen. */
  private slicesInput() {
    const mode = (m: 'auto' | 'custom') => () => { this.slicesMode = m; this.error = ''; };
    const set = (key: 'slices' | 'spacing') => (e: Event) => { this.customSlices = { ...this.customSlices, [key]: Number((e.target as HTMLInputElement).value) }; this.requestUpdate(); };
    return html`<div class="field wide"><label>Volume slices</label>
      <div class="grid-choices" role="radiogroup" aria-label="Volume slices">
        <label><input type="radio" name="slices" value="auto" .checked=${live(this.slicesMode === 'auto')} @change=${mode('auto')}>Cover the height every view measures, slices as thick as the pixels are wide</label>
        <div class="custom"><label><input type="radio" name="slices" value="custom" .checked=${live(this.slicesMode === 'custom')} @change=${mode('custom')}>Choose:</label>
        <label><input type="number" name="volumeSlices" min="1" max="4096" step="1" .value=${live(String(this.customSlices.slices))} ?disabled=${this.slicesMode !== 'custom'} @input=${set('slices')}> slices</label>
        <label>× <input type="number" name="volumeSpacing" min="0.01" max="100" step="0.1" .value=${live(String(this.customSlices.spacing))} ?disabled=${this.slicesMode !== 'custom'} @input=${set('spacing')}> mm apart</label></div>
      </div>
      <span class="help">Axial slices of the cone-beam volume, centred on the central plane; each side of a slice has the pixels of the image grid above.</span></div>`;
  }

  private queue(e: Event) {
    e.preventDefault();
    try {
      const problem = knowledgeProblem(this.recipe());
      if (problem) {
        this.error = problem;
        return;
      }
      const recipe = validateRecipe(this.recipe());
      this.error = '';
      const name = recipeLabel(recipe as unknown as Record<string, unknown>);
      this.dispatchEvent(new CustomEvent('recipe-queue', { detail: { recipe, name }, bubbles: true, composed: true }));
    } catch (err) {
      if (!(err instanceof InputError)) throw err;
      this.error = err.pageMessage;
    }
  }

  render() {
    const shown = this.fields.filter((f) => !f.appliesTo || f.appliesTo(this.values));
    return html`<form @submit=${this.queue} novalidate aria-label="Recipe">
        ${shown.map((f) => html`<div class="field ${f.kind === 'grid' ? 'wide' : ''}">
          <label for=${`field-${f.key}`}>${f.label}${'unit' in f && f.unit ? ` (${f.unit})` : ''}</label>
          ${this.input(f)}
          ${f.key === 'extend' && this.advice ? html`<span class="advice" id="extend-advice">Suggested for this scan: <strong>${this.advice.label}</strong>. ${this.advice.reason}.</span>` : nothing}
          <span class="help">${f.help}</span></div>`)}
        ${this.cone ? this.slicesInput() : nothing}
        <div class="field wide"><label>Reduce the scan for this run</label>
          <rf-reduction-input name="recipe" ?cone=${this.cone} .reduce=${this.reduce}
            @reduction-change=${(e: CustomEvent) => { e.stopPropagation(); this.reduce = e.detail.reduce; this.error = ''; }}></rf-reduction-input></div>
        ${this.knowledgeInput()}
      </form>
      <div class="actions">
        <button class="primary" id="queue-recipe" ?disabled=${this.disabled} @click=${this.queue}>Add to queue</button>
        <span class="summary">${recipeLabel(this.recipe())}</span>
      </div>
      ${this.error ? html`<div class="error" role="alert">Not queued: ${this.error}</div>` : nothing}`;
  }
}
customElements.define('rf-recipe-form', RecipeForm);
