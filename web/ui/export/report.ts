// The printable report: one self-contained HTML file (images as data: URLs, inline styles, a
// policy that forbids loading anything) with the recipe, the figures and the caution.
import { correctionWords } from '../../core/recipe/label';
import type { Comparison, RegionFigures } from '../../core/compare';
import type { DataResidual } from '../../core/data-residual';
import type { ResultKnowledge } from '../logic/result-knowledge';

export interface ReportImage {
  label: string;
  colour: string;
  /** PNG data: URL at the report's window. */
  png: string;
  recipe?: Record<string, unknown>;
  seconds?: number;
  warnings: string[];
  metrics?: Comparison | null;
  /** Re-projection against the measured data. */
  residual?: DataResidual | null;
  /** Mean and SD over the determined pixels of the drawn circle; `undetermined` pixels were left out. */
  region?: { mean: number; sd: number; pixels: number; undetermined?: number };
  /** How much of the image the result does not determine, in words (DBP results that keep their mask). */
  undetermined?: string;
  /** What the result knew beyond the data (known regions, outline) and what the knowledge did. */
  knowledge?: ResultKnowledge;
}

export interface ReportInput {
  title: string;
  scanName: string;
  scanSummary: string;
  /** Where the HU scale comes from (mu_water and how it was set), in words. */
  huScale?: string;
  referenceLabel: string;
  window: { width: number; level: number };
  unit: string;
  images: ReportImage[];
  /** An SVG plot of the line profile (markup), when a line was drawn. */
  profileSvg?: string;
  profileCaption?: string;
  /** The images carry the overlay of their undetermined pixels. */
  undeterminedDrawn?: boolean;
  createdAt: Date;
}

const esc = (s: unknown) => String(s).replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!);

const f = (v: number | undefined, digits: number) => (v === undefined || !Number.isFinite(v) ? '–' : v.toFixed(digits));

function figures(r: RegionFigures | null | undefined): string {
  return r ? `<td>${f(r.rmse, 1)}</td><td>${f(r.psnr, 1)}</td><td>${f(r.ssim, 3)}</td>` : '<td>–</td><td>–</td><td>–</td>';
}

const CAUTION = 'For research and quality work, not for diagnosis. Defer to local regulations and licensed clinical practice.';

/** A recipe's truncation correction in words (a result added from an image file has none of its own). */
function correctionOf(recipe: Record<string, unknown>): string {
  return correctionWords(recipe) || 'made elsewhere (image file)';
}

/** One result's knowledge: the items in words, each region's value before and after, and the residual before and after. */
function knowledgeSection(label: string, colour: string, k: ResultKnowledge): string {
  const rows = k.regions.map((g) => `<tr><th scope="row">${esc(g.name)}</th><td>${f(g.knownHu, 0)}</td><td>${f(g.beforeHu, 0)}</td><td>${f(g.afterHu, 0)}</td></tr>`).join('');
  const pct = (v: number) => (Number.isFinite(v) ? `${(100 * v).toFixed(2)}%` : '–');
  return `<h3><span class="dot" style="background:${esc(colour)}"></span>${esc(label)}</h3><ul>${k.used.map((u) => `<li>${esc(u)}</li>`).join('')}</ul>
${rows ? `<table><thead><tr><th></th><th>Known (HU)</th><th>Correction alone (HU)</th><th>With the knowledge (HU)</th></tr></thead><tbody>${rows}</tbody></table>` : ''}
${k.residual ? `<p class="meta">Residual against the measured data: ${pct(k.residual.before.relative)} with the correction alone, ${pct(k.residual.after.relative)} with the knowledge.</p>` : ''}`;
}

/** A region's figures over its determined pixels; a circle wholly undetermined has none. */
function regionRow(label: string, g: NonNullable<ReportImage['region']>): string {
  const left = g.undetermined ? ` (${g.undetermined} not determined, left out)` : '';
  if (!g.pixels && g.undetermined) return `<tr><th scope="row">${esc(label)}</th><td colspan="2">not determined</td><td>0${left}</td></tr>`;
  return `<tr><th scope="row">${esc(label)}</th><td>${f(g.mean, 1)}</td><td>${f(g.sd, 1)}</td><td>${g.pixels}${left}</td></tr>`;
}

/** The report as a complete HTML document. */
export function buildReport(r: ReportInput): string {
  const unit = r.images.find((i) => i.metrics)?.metrics?.unit ?? r.unit;
  const pct = (v: number | undefined, signed = false) => (v === undefined || !Number.isFinite(v) ? '–' : `${signed && v >= 0 ? '+' : ''}${(100 * v).toFixed(1)}%`);
  const rows = r.images.filter((i) => i.metrics).map((i) => `<tr><th scope="row"><span class="dot" style="background:${esc(i.colour)}"></span>${esc(i.label)}</th>
    ${figures(i.metrics!.regions.image)}${figures(i.metrics!.regions.insideFov)}${figures(i.metrics!.regions.outsideFov)}<td>${pct(i.metrics!.cupping?.excess, true)}</td></tr>`).join('');
  const residualRows = r.images.filter((i) => i.residual).map((i) => `<tr><th scope="row"><span class="dot" style="background:${esc(i.colour)}"></span>${esc(i.label)}</th>
    <td>${pct(i.residual!.relative)}</td><td>${i.residual!.rms.toPrecision(3)}</td><td>${i.residual!.bias.toPrecision(3)}</td><td>${i.residual!.worstView}${i.residual!.sampled ? ` (${esc(i.residual!.sampled)})` : ''}</td></tr>`).join('');
  const regionRows = r.images.filter((i) => i.region).map((i) => regionRow(i.label, i.region!)).join('');
  const undetermined = r.images.filter((i) => i.undetermined).map((i) => `<li><span class="dot" style="background:${esc(i.colour)}"></span>${esc(i.label)}: ${esc(i.undetermined)}</li>`).join('');
  const recipes = r.images.filter((i) => i.recipe).map((i) => `<tr><th scope="row">${esc(i.label)}</th><td class="left">${esc(correctionOf(i.recipe!))}</td><td class="left"><code>${esc(JSON.stringify(i.recipe))}</code></td><td>${f(i.seconds, 1)} s</td></tr>`).join('');
  const knowledge = r.images.filter((i) => i.knowledge).map((i) => knowledgeSection(i.label, i.colour, i.knowledge!)).join('');
  const warnings = r.images.flatMap((i) => i.warnings.map((w) => `<li>${esc(i.label)}: ${esc(w)}</li>`)).join('');
  return `<!doctype html>
<html lang="en"><head><meta charset="utf-8">
<meta http-equiv="Content-Security-Policy" content="default-src 'none'; img-src data:; style-src 'unsafe-inline'">
<title>${esc(r.title)}</title>
<style>
  body { font: 13px/1.45 system-ui, -apple-system, 'Segoe UI', Roboto, Arial, sans-serif; color: #1c2430; margin: 24px auto; max-width: 960px; padding: 0 16px; }
  h1 { font-size: 20px; margin: 0 0 4px; } h3 { font-size: 13px; margin: 12px 0 4px; } h2 { font-size: 15px; margin: 22px 0 8px; border-bottom: 1px solid #d8dce2; padding-bottom: 4px; }
  .caution { background: #fff4df; color: #8a5300; border: 1px solid #f0dcb4; border-radius: 6px; padding: 8px 12px; font-weight: 600; }
  .meta { color: #5d6877; }
  .images { display: grid; grid-template-columns: repeat(2, 1fr); gap: 12px; }
  figure { margin: 0; break-inside: avoid; } figure img { width: 100%; image-rendering: pixelated; border-radius: 4px; display: block; }
  figcaption { font-size: 12px; margin-top: 4px; }
  table { border-collapse: collapse; width: 100%; break-inside: avoid; } th, td { padding: 4px 8px; border-bottom: 1px solid #e3e6ea; text-align: right; font-variant-numeric: tabular-nums; }
  th[scope=row], td.left { text-align: left; } thead th { color: #5d6877; font-weight: 600; }
  code { font-size: 11.5px; word-break: break-all; }
  .dot { display: inline-block; width: 9px; height: 9px; border-radius: 50%; margin-right: 6px; }
  svg { width: 100%; height: auto; }
  @media print { body { margin: 0; max-width: none; } .images { grid-template-columns: repeat(2, 1fr); } h2 { break-after: avoid; } }
  @page { margin: 15mm; }
</style></head><body>
<p class="caution">${CAUTION}</p>
<h1>${esc(r.title)}</h1>
<p class="meta">Scan: ${esc(r.scanName)} — ${esc(r.scanSummary)}<br>${r.huScale ? `HU scale: ${esc(r.huScale)}<br>` : ''}Made with Rimfill on ${esc(r.createdAt.toISOString().slice(0, 16).replace('T', ' '))} (UTC). Images at window ${f(r.window.width, 0)} / level ${f(r.window.level, 0)} ${esc(r.unit)}; the dashed circle in the page marks the measured field of view.</p>
<h2>Images</h2>
<div class="images">${r.images.map((i) => `<figure><img alt="${esc(i.label)}" src="${i.png}"><figcaption><span class="dot" style="background:${esc(i.colour)}"></span>${esc(i.label)}</figcaption></figure>`).join('')}</div>
${rows ? `<h2>Agreement with ${esc(r.referenceLabel)} (${esc(unit)})</h2>
<table><thead><tr><th></th><th colspan="3">Whole image</th><th colspan="3">Inside the measured field</th><th colspan="3">Outside it</th><th>Shape</th></tr>
<tr><th></th>${'<th>RMSE</th><th>PSNR dB</th><th>SSIM</th>'.repeat(3)}<th>Cupping</th></tr></thead><tbody>${rows}</tbody></table>
<p class="meta">Cupping: the rim / centre ratio inside the measured field relative to the reference's (0% = the right shape).</p>` : ''}
${residualRows ? `<h2>Agreement with the measured data</h2>
<table><thead><tr><th></th><th>Relative residual</th><th>RMS (line integral)</th><th>Mean (line integral)</th><th>Worst view</th></tr></thead><tbody>${residualRows}</tbody></table>
<p class="meta">Each image re-projected onto the measured detector channels and compared with the measured line integrals: ‖Af − p‖ / ‖p‖. A positive mean means the image holds too much along the measured rays.</p>` : ''}
${undetermined ? `<h2>Not determined</h2><ul>${undetermined}</ul>
<p class="meta">These pixels (DBP: outside the measured field of view, or on chords that cross no known region) are not set by the data and the knowledge; they hold air as a fill${r.undeterminedDrawn ? ' and are drawn with violet stripes in the images above' : ''}.</p>` : ''}
${regionRows ? `<h2>Region statistics (${esc(r.unit)})</h2><table><thead><tr><th></th><th>Mean</th><th>SD</th><th>Pixels</th></tr></thead><tbody>${regionRows}</tbody></table>` : ''}
${r.profileSvg ? `<h2>Line profile</h2>${r.profileCaption ? `<p class="meta">${esc(r.profileCaption)}</p>` : ''}${r.profileSvg}` : ''}
${knowledge ? `<h2>Knowledge beyond the data</h2>${knowledge}
<p class="meta">Each known region's mean with the truncation correction alone and with the knowledge; the residual against the measured data should not grow (the knowledge settles only what the truncated data leave open).</p>` : ''}
${recipes ? `<h2>Recipes</h2><table><thead><tr><th></th><th class="left">Truncation correction</th><th class="left">Recipe</th><th>Time</th></tr></thead><tbody>${recipes}</tbody></table>` : ''}
${warnings ? `<h2>Warnings</h2><ul>${warnings}</ul>` : ''}
<p class="caution">${CAUTION}</p>
</body></html>`;
}
