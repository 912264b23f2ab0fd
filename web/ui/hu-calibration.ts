import { html, LitElement, css, nothing } from 'lit';
import { live } from 'lit/directives/live.js';
import type { ScanCalibration } from '../store/records';
import { theme } from './theme';

/** A region drawn on a stored result, which can be marked as a material of known HU. */
export interface CalibrationRegion {
  resultId: string;
  label: string;
  region: { cx: number; cy: number; radius: number };
}

/** SD above this in the marked region means it is not one material (common practice: water phantoms show a few HU of noise). */
const NOT_UNIFORM_HU = 20;

const emit = (el: HTMLElement, name: string, detail: unknown = {}) => el.dispatchEvent(new CustomEvent(name, { detail, bubbles: true, composed: true }));

/** The HU scale in words, for the page and the report: mu_water and where it came from. */
export function huScaleText(muWater: number | undefined, c: ScanCalibration | undefined): string {
  return muWater ? `mu of water ${muWater.toPrecision(5)} /mm, ${provenance(c)}` : 'mu of water unknown: values in mu (1/mm)';
}

/** "measured in “FBP…” (circle of 15 mm at 0, 0 marked as 0 HU; SD 4 HU over 700 pixels)". */
function provenance(c: ScanCalibration | undefined): string {
  if (!c) return 'as it came with the scan';
  const when = new Date(c.at).toLocaleString();
  if (c.method === 'hand') return `set by hand, ${when}`;
  const r = c.region;
  return `measured in “${c.resultName}”, ${when}: circle of ${r.radius.toFixed(1)} mm at (${r.cx.toFixed(1)}, ${r.cy.toFixed(1)}) mm marked as ${c.materialHu} HU; SD ${c.stdHu.toFixed(1)} HU over ${c.pixels} pixels`;
}

/**
 * The scan's mu of water, which turns attenuation into HU: shown with where it came from, set
 * by hand, or measured from a region drawn on a result and marked as water (0 HU) or another
 * material of known HU.
 * @fires calibrate - detail: { muWater } or { resultId, region, materialHu }
 * @fires calibrate-error-dismiss
 */
export class HuCalibration extends LitElement {
  static properties = {
    muWater: { type: Number }, calibration: { attribute: false }, regionSource: { attribute: false }, busy: { type: Boolean }, error: { type: String },
    typed: { state: true }, materialHu: { state: true },
  };
  /** The scan's mu_water, 1/mm (undefined: unknown, images are shown in mu). */
  declare muWater: number | undefined;
  declare calibration: ScanCalibration | undefined;
  /** The region drawn on the highlighted result, when there is one. */
  declare regionSource: CalibrationRegion | undefined;
  declare busy: boolean;
  declare error: string;
  declare typed: string;
  declare materialHu: string;

  static styles = [theme, css`
    :host { display: block; }
    .value { font-size: 13px; margin: 0 0 8px; }
    .sub { font-size: 12px; color: var(--muted); }
    .row { display: flex; gap: 6px; align-items: center; flex-wrap: wrap; margin: 8px 0; font-size: 13px; }
    input[type='number'] { width: 90px; }
  `];

  constructor() {
    super();
    this.muWater = undefined;
    this.calibration = undefined;
    this.regionSource = undefined;
    this.busy = false;
    this.error = '';
    this.typed = '';
    this.materialHu = '0';
  }

  private setByHand() {
    emit(this, 'calibrate', { muWater: Number(this.typed) });
  }

  private measure() {
    const s = this.regionSource;
    if (s) emit(this, 'calibrate', { resultId: s.resultId, region: s.region, materialHu: Number(this.materialHu) });
  }

  render() {
    const s = this.regionSource;
    return html`<div class="card">
      <h2>HU calibration</h2>
      ${this.muWater
        ? html`<p class="value">mu of water <strong class="num" id="mu-water">${this.muWater.toPrecision(5)}</strong> /mm<br><span class="sub">${provenance(this.calibration)}</span></p>`
        : html`<p class="value" id="mu-water-unknown">mu of water is unknown: images are shown in mu (1/mm). Set it to see HU.</p>`}
      ${this.muWater && this.calibration?.method === 'region' && this.calibration.stdHu > NOT_UNIFORM_HU
        ? html`<p class="warning" id="calibration-uniformity">The marked region was not uniform (SD ${this.calibration.stdHu.toFixed(0)} HU): for a trustworthy HU scale, mark a region of one material.</p>` : nothing}
      <div class="row"><label for="mu-water-input">By hand</label>
        <input type="number" id="mu-water-input" name="mu-water" min="0.001" max="1" step="0.0001" placeholder="0.0206" .value=${live(this.typed)}
          @input=${(e: Event) => (this.typed = (e.target as HTMLInputElement).value)}> /mm
        <button class="small" id="set-mu-water" ?disabled=${this.busy || this.typed.trim() === ''} @click=${this.setByHand}>Set</button></div>
      <div class="row"><label for="material-hu">From the drawn region, a material of</label>
        <input type="number" id="material-hu" name="material-hu" step="1" .value=${live(this.materialHu)}
          @input=${(e: Event) => (this.materialHu = (e.target as HTMLInputElement).value)}> HU
        <button class="small" id="measure-mu-water" ?disabled=${this.busy || !s || this.materialHu.trim() === ''} @click=${this.measure}>Measure</button></div>
      <p class="sub">${s ? `Region: ${s.region.radius.toFixed(1)} mm around (${s.region.cx.toFixed(1)}, ${s.region.cy.toFixed(1)}) mm in “${s.label}”.`
        : 'Draw a region (Region tool) in uniform water (0 HU) or a material of known HU on a result, highlighted.'}
        The value is kept with the scan; every result's HU and its comparison with the reference follow it.</p>
      ${this.error ? html`<div class="error" role="alert" id="calibration-error">${this.error}
        <button class="small" @click=${() => emit(this, 'calibrate-error-dismiss')}>Dismiss</button></div>` : nothing}
    </div>`;
  }
}
customElements.define('rf-hu-calibration', HuCalibration);
