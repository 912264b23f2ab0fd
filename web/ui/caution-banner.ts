import { html, LitElement, css } from 'lit';
import { theme } from './theme';

/** The standing caution about what the page is for. */
export class CautionBanner extends LitElement {
  static styles = [theme, css`
    :host { display: block; }
    p { margin: 0; padding: 7px 16px; background: var(--warn-soft); color: var(--warn); font-size: 13px; border-bottom: 1px solid #f0dcb4; }
    strong { font-weight: 600; }
  `];

  render() {
    return html`<p role="note" id="caution"><strong>For research and quality work, not for diagnosis.</strong>
      Defer to local regulations and licensed clinical practice. Everything stays in this browser on this computer.</p>`;
  }
}
customElements.define('rf-caution', CautionBanner);
