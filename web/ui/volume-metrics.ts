import { html, LitElement, nothing } from 'lit';
import type { VolumeComparison, VolumeRegion } from '../core/compare-volume';
import { theme } from './theme';

const REGIONS: Array<{ key: VolumeRegion; label: string }> = [
  { key: 'volume', label: 'Whole volume' },
  { key: 'object', label: 'Object' },
  { key: 'insideFov', label: 'Inside the FOV cylinder' },
  { key: 'outsideFov', label: 'Object outside it' },
];

/** RMSE, PSNR and SSIM (slice by slice) of a volume against the reference volume (core/compare-volume.ts). */
export class VolumeMetrics extends LitElement {
  static properties = { comparison: { attribute: false } };
  declare comparison: VolumeComparison;

  static styles = [theme];

  render() {
    const c = this.comparison;
    if (!c) return nothing;
    const d = c.unit === 'HU' ? 1 : 6;
    const fmt = (x: number | undefined, digits: number) => (x !== undefined && Number.isFinite(x) ? x.toFixed(digits) : '–');
    return html`<table id="volume-metrics" aria-label="Volume against the reference">
      <thead><tr><th>Region</th><th>Voxels</th><th>RMSE (${c.unit})</th><th>PSNR (dB)</th><th>SSIM</th></tr></thead>
      <tbody>${REGIONS.map(({ key, label }) => {
        const f = c.regions[key];
        return html`<tr data-region=${key}><td>${label}</td><td class="num">${f ? f.pixels : '–'}</td>
          <td class="num" data-metric="rmse">${fmt(f?.rmse, d)}</td><td class="num">${fmt(f?.psnr, 2)}</td><td class="num">${fmt(f?.ssim, 4)}</td></tr>`;
      })}</tbody>
    </table>
    ${c.fovRadiusMm !== null ? html`<p class="muted">FOV cylinder: radius ${c.fovRadiusMm.toFixed(1)} mm${c.fovHalfHeightMm !== null ? `, half height ${c.fovHalfHeightMm.toFixed(1)} mm` : ''}; SSIM computed in axial slices.${c.resampled ? ' The reference was resampled onto the volume grid.' : ''}</p>` : nothing}`;
  }
}
customElements.define('rf-volume-metrics', VolumeMetrics);
