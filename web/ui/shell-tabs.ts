// The page's four tab panels (Projections, Reconstruct, Images, Prior check) for the chosen scan,
// drawn in the shell's own shadow root from its state; their events go to the shell's actions.
import { html, nothing } from 'lit';
import type { ScanMeta } from '../store/records';
import { knowledgeOf, recipeKnowledgeOf } from '../store/knowledge';
import type { AppShell } from './app-shell';
import { scanSummary } from './logic/describe';
import { baselineOf } from './logic/compare-set';
import { knowledgeKind } from './logic/recipe-knowledge';
import { applyGeometry, calibrate, changeKnowledge, exportDicom, importImage, showKnowledgeDemo } from './scan-actions';
import { volumeChoices, volumePlanes } from './volume-choices';
import './method-guidance';
import './prior-workbench';
import './recipe-form';
import './results-view';
import './run-queue';
import './scan-view';
import './volume-view';

/** The tab panels, or what the page says while no scan is chosen. */
export function tabPanels(s: AppShell) {
  const scan = s.scans.find((x) => x.id === s.selectedScanId);
  if (!scan) {
    return html`<div class="card placeholder">${s.demoBusy
      ? html`<p>Preparing the demo scan: simulating a truncated fan-beam scan of the thorax phantom and its ground truth…</p><progress max="1" .value=${s.demoFraction}></progress>`
      : s.ready ? 'Import a scan, or add the demo scan, to begin.' : 'Opening the library…'}</div>`;
  }
  return html`
    <section role="tabpanel" aria-labelledby="tab-scan" ?hidden=${s.tab !== 'scan'}>${scanTab(s, scan)}</section>
    <section role="tabpanel" aria-labelledby="tab-reconstruct" ?hidden=${s.tab !== 'reconstruct'}>${reconstructTab(s, scan)}</section>
    <section role="tabpanel" aria-labelledby="tab-images" ?hidden=${s.tab !== 'images'}>${imagesTab(s, scan)}</section>
    <section role="tabpanel" aria-labelledby="tab-prior" ?hidden=${s.tab !== 'prior'}>${priorTab(s, scan)}</section>`;
}

function scanTab(s: AppShell, scan: ScanMeta) {
  const loaded = s.loaded?.id === scan.id ? s.loaded : undefined;
  return html`<rf-scan-view .meta=${scan} .projections=${loaded?.projections}
      .report=${loaded?.report} .advice=${loaded?.advice}
      .geometryError=${s.geometryError}
      @geometry-apply=${(e: CustomEvent) => s.act('The geometry could not be applied', () => applyGeometry(s, e.detail.geometry))}></rf-scan-view>`;
}

/** Stored results a recipe of `scan` may take as its prior: volumes for a cone-beam scan, else images; any scan's (the same object scanned before). */
function priorChoices(s: AppShell, scan: ScanMeta): Array<{ id: string; label: string }> {
  const cone = scan.geometry.kind === 'cone';
  const scanName = new Map(s.scans.map((x) => [x.id, x.name]));
  return s.results.filter((r) => !!r.volume === cone)
    .map((r) => ({ id: r.id, label: r.scanId === scan.id ? r.name : `${r.name} (scan “${scanName.get(r.scanId) ?? 'deleted'}”)` }));
}

function reconstructTab(s: AppShell, scan: ScanMeta) {
  const loaded = s.loaded?.id === scan.id ? s.loaded : undefined;
  return html`<div class="reconstruct">
      <div class="card"><h2>Recipe for “${scan.name}”</h2>
        <rf-recipe-form .referenceGrid=${loaded?.referenceGrid} ?cone=${scan.geometry.kind === 'cone'}
          .advice=${loaded?.advice} .defaultGrid=${loaded ? loaded.gridText : ''}
          .priorResults=${priorChoices(s, scan)} .knowledge=${scan.knowledge}
          @recipe-queue=${(e: CustomEvent) => s.act('The recipe could not be queued', () => s.queue.add(scan, e.detail.recipe, e.detail.name))}></rf-recipe-form></div>
      <div class="side-cards"><div class="card"><h2>Queue</h2>
        <label class="budget">Memory budget <input type="number" id="memory-budget" min="0.1" max="4" step="0.1" placeholder="browser's"
          .value=${s.memoryBudgetGb} @input=${(e: Event) => (s.memoryBudgetGb = (e.target as HTMLInputElement).value)}> GB
          <span class="muted">(empty: half the device memory the browser reports; a run that would need more is refused before it starts, naming the binning that fits)</span></label>
        <rf-run-queue .jobs=${s.queue.jobs}
          @job-cancel=${(e: CustomEvent) => s.queue.cancel(e.detail.key)}
          @job-rerun=${(e: CustomEvent) => s.act('The run could not be queued again', () => s.queue.rerun(e.detail.key))}
          @job-remove=${(e: CustomEvent) => s.queue.forget([e.detail.key])}
          @queue-clear=${() => s.queue.forget(s.queue.jobs.map((j) => j.key))}
          @job-show=${(e: CustomEvent) => s.act('The result could not be shown', async () => {
            const job = s.queue.jobs.find((j) => j.key === e.detail.key);
            if (job?.resultId) {
              if (job.scanId !== s.selectedScanId) await s.selectScan(job.scanId);
              if (!s.compared.ids.includes(job.resultId)) await s.compared.toggle(job.resultId);
              s.tab = 'images';
            }
          })}></rf-run-queue></div>
      <div class="card" id="method-guidance"><h2>Choosing a method</h2>
        <rf-method-guidance .summary=${loaded?.report.summary} .given=${knowledgeKind(recipeKnowledgeOf(knowledgeOf(scan)))}></rf-method-guidance></div></div>
    </div>`;
}

function imagesTab(s: AppShell, scan: ScanMeta) {
  const loaded = s.loaded?.id === scan.id ? s.loaded : undefined;
  const c = s.compared;
  const results = s.results.filter((r) => r.scanId === scan.id);
  return html`<rf-results-view .results=${results} .selected=${c.ids} .images=${c.images} .masks=${c.masks}
    .truth=${loaded?.truth} .referenceId=${c.referenceId} .comparisons=${c.comparisons}
    .scanName=${scan.name} .scanSummary=${scanSummary(scan)} ?cone=${scan.geometry.kind === 'cone'} .imageImport=${s.imageImport}
    @image-files-chosen=${(e: CustomEvent) => s.act('The image could not be added', () => importImage(s, scan.id, e.detail.files, e.detail.slice))}
    @image-import-error-dismiss=${() => (s.imageImport = { ...s.imageImport, error: '' })}
    .muWater=${scan.muWater} .calibration=${scan.calibration} .calibrating=${s.calibrating}
    @calibrate=${(e: CustomEvent) => s.act('The calibration failed', () => calibrate(s, scan.id, e.detail))}
    @calibrate-error-dismiss=${() => (s.calibrating = { ...s.calibrating, error: '' })}
    .waitingId=${c.waiting} .baselineId=${baselineOf(results) ?? ''}
    @result-toggle=${(e: CustomEvent) => s.act('The result could not be shown', () => c.toggle(e.detail.id))}
    @compare-replace=${(e: CustomEvent) => s.act('The result could not be shown', () => c.replace(e.detail.leave))}
    @compare-dismiss=${() => c.dismissWaiting()}
    @result-delete=${(e: CustomEvent) => s.act('The library could not be read', () => s.storeAction(async () => {
      await s.client.deleteResult(e.detail.id);
      c.deleted(e.detail.id, !!s.loaded?.truth);
    }))}
    .scanId=${scan.id} .knowledge=${scan.knowledge} .suggested=${loaded?.suggested} .knowledgeState=${s.knowledgeState}
    ?demo=${scan.source.type === 'demo' && scan.geometry.kind !== 'cone'}
    @knowledge-change=${(e: CustomEvent) => s.act('The knowledge could not be stored', () => changeKnowledge(s, e.detail.request))}
    @knowledge-demo=${() => s.act('The demo could not be queued', () => showKnowledgeDemo(s, scan.id))}
    @knowledge-error-dismiss=${() => (s.knowledgeState = { ...s.knowledgeState, error: '' })}
    .dicomExport=${s.dicomExport} @export-dicom=${(e: CustomEvent) => s.act('The DICOM export failed', () => exportDicom(s, e.detail.id))}
    @reference-change=${(e: CustomEvent) => s.act('The reference could not be loaded', () => c.setReference(e.detail.id))}></rf-results-view>
    ${scan.geometry.kind === 'cone' ? html`<rf-volume-view .choices=${volumeChoices(scan, s.results)} .planes=${volumePlanes(s.client, scan.id)}></rf-volume-view>` : nothing}`;
}

function priorTab(s: AppShell, scan: ScanMeta) {
  return html`<rf-prior-workbench .client=${s.client} .scan=${scan} .results=${s.results.filter((r) => r.scanId === scan.id)}
    .referenceGrid=${s.loaded?.id === scan.id ? s.loaded.referenceGrid : undefined} ?active=${s.tab === 'prior'}
    @library-changed=${() => s.act('The library could not be read', () => s.refreshLibrary())}></rf-prior-workbench>`;
}
