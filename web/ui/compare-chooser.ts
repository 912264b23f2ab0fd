import { html, LitElement, css } from 'lit';
import { MAX_COMPARED } from './logic/compare-set';
import { theme } from './theme';

/** One compared image as the chooser offers it. */
export interface ChooserItem {
  id: string;
  label: string;
  colour: string;
  /** "baseline", "reference" or '' (said beside the label, so the user thinks twice). */
  role: string;
}

/**
 * Asks which compared image leaves when another result wants a place and the comparison is full.
 * @fires compare-replace - detail: { leave } (the id that makes room)
 * @fires compare-dismiss - the waiting result stays out
 */
export class CompareChooser extends LitElement {
  static properties = { waiting: { type: String }, items: { attribute: false } };
  /** Label of the result that waits for a place. */
  declare waiting: string;
  /** The compared images, in panel order. */
  declare items: ChooserItem[];

  static styles = [theme, css`
    .card { border-color: var(--accent); background: var(--accent-soft); }
    p { margin: 0 0 8px; font-size: 13px; }
    .choices { display: flex; flex-wrap: wrap; gap: 6px; align-items: center; }
    button .swatch { display: inline-block; width: 10px; height: 10px; border-radius: 2px; margin-right: 6px; vertical-align: -1px; }
    .role { color: var(--muted); font-size: 12px; margin-left: 4px; }
  `];

  constructor() {
    super();
    this.waiting = '';
    this.items = [];
  }

  private send(name: string, detail: unknown) {
    this.dispatchEvent(new CustomEvent(name, { detail, bubbles: true, composed: true }));
  }

  updated() {
    this.renderRoot.querySelectorAll<HTMLElement>('.swatch[data-colour]').forEach((s) => {
      s.style.setProperty('background', s.dataset.colour ?? '');
    });
  }

  render() {
    return html`<div class="card" role="group" aria-label="Choose which image leaves">
      <p><strong>“${this.waiting}”</strong> is ready, and ${MAX_COMPARED} images are compared already. Show it instead of:</p>
      <div class="choices">
        ${this.items.map((it) => html`<button class="small" data-leave=${it.id} @click=${() => this.send('compare-replace', { leave: it.id })}>
          <span class="swatch" data-colour=${it.colour}></span>${it.label}${it.role ? html`<span class="role">(${it.role})</span>` : ''}</button>`)}
        <button class="small" id="compare-not-now" @click=${() => this.send('compare-dismiss', {})}>Not now</button>
      </div>
    </div>`;
  }
}
customElements.define('rf-compare-chooser', CompareChooser);
