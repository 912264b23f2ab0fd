import { html, LitElement, css, nothing } from 'lit';
import type { ResultKnowledge } from './logic/result-knowledge';
import { theme } from './theme';

export interface KnowledgeReportRow {
  label: string;
  colour: string;
  knowledge: ResultKnowledge;
}

const hu = (v: number) => (Number.isFinite(v) ? v.toFixed(0) : '–');
const pct = (v: number) => (Number.isFinite(v) ? `${(100 * v).toFixed(2)}%` : '–');

/**
 * The knowledge each compared result used: the items in words, each known region's value with
 * the correction alone (before) and with the knowledge (after), and the residual against the
 * measured data before and after (it should not grow: the knowledge may only change what the
 * data leave open).
 */
export class KnowledgeReport extends LitElement {
  static properties = { rows: { attribute: false } };
  declare rows: KnowledgeReportRow[];

  static styles = [theme, css`
    .result { margin-top: 10px; }
    .result:first-child { margin-top: 0; }
    .name { font-size: 13px; font-weight: 600; overflow-wrap: anywhere; }
    .dot { display: inline-block; width: 9px; height: 9px; border-radius: 50%; margin-right: 6px; }
    ul { margin: 4px 0 6px; padding-left: 18px; font-size: 13px; }
    li { overflow-wrap: anywhere; }
    table { font-size: 12px; }
    td.region { max-width: 420px; overflow-wrap: anywhere; }
    .residual { font-size: 12px; color: var(--muted); margin: 4px 0 0; }
  `];

  constructor() {
    super();
    this.rows = [];
  }

  updated() {
    this.renderRoot.querySelectorAll<HTMLElement>('.dot').forEach((d) => { d.style.background = d.dataset.colour ?? ''; });
  }

  render() {
    return this.rows.map((r) => html`<div class="result" data-label=${r.label}>
      <div class="name"><span class="dot" data-colour=${r.colour}></span>${r.label}</div>
      <ul>${r.knowledge.used.map((u) => html`<li>${u}</li>`)}</ul>
      ${r.knowledge.regions.length ? html`<table class="regions" aria-label=${`Known regions in ${r.label}`}>
        <thead><tr><th>Known region</th><th>Known (HU)</th><th>Correction alone (HU)</th><th>With the knowledge (HU)</th></tr></thead>
        <tbody>${r.knowledge.regions.map((g) => html`<tr><td class="region">${g.name}</td><td class="num">${hu(g.knownHu)}</td><td class="num">${hu(g.beforeHu)}</td><td class="num" data-metric="after">${hu(g.afterHu)}</td></tr>`)}</tbody>
      </table>` : nothing}
      ${r.knowledge.residual ? html`<p class="residual">Residual against the measured data: ${pct(r.knowledge.residual.before.relative)} with the correction alone, ${pct(r.knowledge.residual.after.relative)} with the knowledge.</p>` : nothing}
    </div>`);
  }
}
customElements.define('rf-knowledge-report', KnowledgeReport);
