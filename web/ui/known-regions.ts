import { html, LitElement, css, nothing } from 'lit';
import { live } from 'lit/directives/live.js';
import { describeRegion } from '../core/knowledge';
import type { ScanKnowledge } from '../store/records';
import type { KnowledgeRequest } from '../worker/app-protocol';
import type { RegionMark } from './image-viewer';
import { circleFromFields, fieldsOfCircle, readNumber, type CircleFields } from './logic/knowledge-form';
import { theme } from './theme';

/** The image a change is checked against (the highlighted one), as the knowledge op takes it. */
export type KnowledgeOn = Extract<KnowledgeRequest, { kind: 'add-region' }>['on'];

const send = (el: HTMLElement, name: string, detail: unknown = {}) => el.dispatchEvent(new CustomEvent(name, { detail, bubbles: true, composed: true }));

const EMPTY: CircleFields = { x: '', y: '', r: '', hu: '', label: '' };

/**
 * The known regions kept with a scan: listed with where each came from, their value and label
 * editable, deletable; a new one from the circle drawn with the Region tool (or typed), or from
 * a mask file, with its HU.
 * @fires knowledge-change - detail: { request } (a KnowledgeRequest for the coordinator)
 * @fires region-draft - detail: { region }: the typed circle, so the panels draw it
 */
export class KnownRegions extends LitElement {
  static properties = {
    scanId: { type: String }, knowledge: { attribute: false }, region: { attribute: false }, on: { attribute: false }, busy: { type: Boolean },
    fields: { state: true }, edits: { state: true }, confirming: { state: true }, problem: { state: true },
  };
  declare scanId: string;
  declare knowledge: ScanKnowledge | undefined;
  /** The circle drawn with the Region tool (null: none). */
  declare region: RegionMark | null;
  /** The highlighted image, which the drawn circle is on. */
  declare on: KnowledgeOn;
  declare busy: boolean;
  declare fields: CircleFields;
  /** Value and label typed for stored regions, by id, until saved. */
  declare edits: Record<string, { hu: string; label: string }>;
  declare confirming: string;
  declare problem: string;

  static styles = [theme, css`
    :host { display: block; }
    ul { list-style: none; margin: 0 0 10px; padding: 0; display: grid; gap: 6px; }
    li { border: 1px solid var(--border); border-radius: 8px; padding: 6px 8px; font-size: 13px; }
    .what { overflow-wrap: anywhere; }
    .sub { font-size: 12px; color: var(--muted); overflow-wrap: anywhere; }
    .row { display: flex; flex-wrap: wrap; gap: 6px; align-items: center; margin-top: 6px; font-size: 13px; }
    .row input[type='number'] { width: 74px; }
    .row input[type='text'] { width: 110px; }
    .num-tag { display: inline-block; min-width: 18px; text-align: center; border-radius: 9px; background: #1f6f45; color: #fff; font-size: 11px; font-weight: 700; margin-right: 6px; }
    .empty { font-size: 13px; color: var(--muted); margin: 0 0 8px; }
    .problem { font-size: 12px; color: var(--danger); margin: 4px 0 0; }
    input[type='file'] { font-size: 12px; max-width: 100%; }
  `];

  constructor() {
    super();
    this.scanId = '';
    this.knowledge = undefined;
    this.region = null;
    this.on = undefined;
    this.busy = false;
    this.fields = EMPTY;
    this.edits = {};
    this.confirming = '';
    this.problem = '';
  }

  willUpdate(changed: Map<string, unknown>) {
    // A circle drawn on the panels fills the position; the value and label stay as typed.
    const r = this.region;
    if (changed.has('region') && r) {
      const typed = circleFromFields(this.fields).value;
      if (!typed || Math.hypot(typed.x - r.centre.x, typed.y - r.centre.y) > 0.05 || Math.abs(typed.r - r.radius) > 0.05) this.fields = fieldsOfCircle(r, this.fields);
    }
    if (changed.has('knowledge')) this.edits = {};
  }

  private change(request: KnowledgeRequest) {
    this.problem = '';
    send(this, 'knowledge-change', { request });
  }

  private type(key: keyof CircleFields, value: string) {
    this.fields = { ...this.fields, [key]: value };
    this.problem = '';
    const c = circleFromFields({ ...this.fields, hu: this.fields.hu || '0' }).value;
    if (c && key !== 'hu' && key !== 'label') send(this, 'region-draft', { region: { centre: { x: c.x, y: c.y }, radius: c.r } });
  }

  private add() {
    const c = circleFromFields(this.fields);
    if (c.problem !== undefined) this.problem = c.problem;
    else this.change({ kind: 'add-region', scanId: this.scanId, region: c.value, on: this.on });
  }

  private maskFile(e: Event) {
    const input = e.target as HTMLInputElement;
    const files = [...(input.files ?? [])];
    input.value = '';
    if (!files.length) return;
    const hu = readNumber(this.fields.hu, 'Value', 'HU');
    if (hu.problem !== undefined) {
      this.problem = `${hu.problem} (the mask's value)`;
      return;
    }
    this.change({ kind: 'mask-file', scanId: this.scanId, files, use: { as: 'region', hu: hu.value, label: this.fields.label }, on: this.on });
  }

  private save(id: string) {
    const e = this.edits[id];
    const hu = readNumber(e.hu, 'Value', 'HU');
    if (hu.problem !== undefined) this.problem = hu.problem;
    else this.change({ kind: 'edit-region', scanId: this.scanId, regionId: id, hu: hu.value, label: e.label, on: this.on });
  }

  private item(s: ScanKnowledge['regions'][number], i: number) {
    const e = this.edits[s.id] ?? { hu: String(s.region.hu), label: s.region.label ?? '' };
    const edit = (key: 'hu' | 'label') => (ev: Event) => { this.edits = { ...this.edits, [s.id]: { ...e, [key]: (ev.target as HTMLInputElement).value } }; };
    const changed = !!this.edits[s.id];
    return html`<li data-region-id=${s.id}>
      <div class="what"><span class="num-tag">${i + 1}</span>${describeRegion(s.region, i)}</div>
      <div class="sub">${s.source}</div>
      <div class="row">
        <label>Value <input type="number" name="region-hu" step="1" .value=${live(e.hu)} @input=${edit('hu')}> HU</label>
        <label>Label <input type="text" name="region-label" .value=${live(e.label)} @input=${edit('label')}></label>
        <button class="small" ?disabled=${!changed || this.busy} @click=${() => this.save(s.id)}>Save</button>
        ${this.confirming === s.id
          ? html`<button class="small danger" @click=${() => { this.confirming = ''; this.change({ kind: 'delete-region', scanId: this.scanId, regionId: s.id }); }}>Delete</button>
            <button class="small" @click=${() => (this.confirming = '')}>Keep</button>`
          : html`<button class="small danger" @click=${() => (this.confirming = s.id)}>Delete…</button>`}
      </div></li>`;
  }

  render() {
    const regions = this.knowledge?.regions ?? [];
    const f = this.fields;
    const field = (key: keyof CircleFields, label: string, unit: string, type = 'number') =>
      html`<label>${label} <input type=${type} name=${`new-region-${key}`} step="any" .value=${live(f[key])} @input=${(e: Event) => this.type(key, (e.target as HTMLInputElement).value)}>${unit ? ` ${unit}` : ''}</label>`;
    return html`<h3>Known regions</h3>
      ${regions.length ? html`<ul id="known-regions">${regions.map((s, i) => this.item(s, i))}</ul>`
        : html`<p class="empty">None yet. A region inside the measured field whose value you know (air in the trachea, fat, blood, water-like tissue) settles the offset the truncated data leave open.</p>`}
      <div class="row">${field('x', 'x', 'mm')}${field('y', 'y', 'mm')}${field('r', 'r', 'mm')}</div>
      <div class="row">${field('hu', 'Value', 'HU')}${field('label', 'Label', '', 'text')}
        <button class="small primary" id="add-known-region" ?disabled=${this.busy} @click=${this.add}>Add known region</button></div>
      <p class="sub">Draw a circle with the Region tool on an image (its mean in each image shows in the Region table), or type it; mm in the image frame.</p>
      <div class="row"><label>Or a mask file with this value <input type="file" id="region-mask-file" ?disabled=${this.busy} @change=${this.maskFile}></label></div>
      ${this.problem ? html`<p class="problem" role="alert">${this.problem}</p>` : nothing}`;
  }
}
customElements.define('rf-known-regions', KnownRegions);
