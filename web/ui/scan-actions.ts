// What the page does to its library and to the chosen scan through the engine's client: the demo
// scans, imports of scan files and of image files, the DICOM export, HU calibration, the scan's
// knowledge (and the demo's runs with it), deleting a scan and editing its geometry. Each action
// shows its progress and its refusal in the shell's state; the library is read again after a change.
import { InputError } from '../core/errors';
import type { Reduction } from '../core/reduction';
import { knowledgeOf } from '../store/knowledge';
import { StorageFullError } from '../store/quota';
import type { ResultMeta, ScanMeta } from '../store/records';
import type { KnowledgeRequest } from '../worker/app-protocol';
import type { EngineClient } from '../worker/client';
import type { ComparisonKeeper } from './comparison-keeper';
import { fileName, saveFile } from './export/download';
import { demoRuns } from './logic/demo-runs';
import type { QueueKeeper } from './queue-keeper';
import type { ImageImportState } from './result-list';
import type { DicomExportState } from './results-view';
import type { ImageGrid } from '../core/image';
import { errorText } from './logic/error-text';

/** The message of a refusal the user can act on (bad input, a full disk), else `what` with the reason. */
const refusal = (err: unknown, what: string) => (err instanceof StorageFullError || err instanceof InputError ? err.message : `${what}: ${errorText(err)}`);

/** The shell's state and steps the actions use (the page's AppShell). */
export interface ScanActionsHost {
  client: EngineClient;
  scans: ScanMeta[];
  results: ResultMeta[];
  selectedScanId: string;
  /** The chosen scan's loaded overview (its ground truth's grid, when it has one). */
  loaded: { id: string; referenceGrid?: ImageGrid } | undefined;
  tab: string;
  importing: boolean;
  importError: string;
  importFraction: number;
  importReduce: Reduction;
  importController?: AbortController;
  imageImport: ImageImportState;
  calibrating: ImageImportState;
  knowledgeState: ImageImportState;
  dicomExport: DicomExportState;
  demoBusy: boolean;
  demoFraction: number;
  coneDemoBusy: boolean;
  coneDemoFraction: number;
  alert: string;
  geometryError: string;
  readonly queue: QueueKeeper;
  readonly compared: ComparisonKeeper;
  refreshLibrary(): Promise<void>;
  selectScan(id: string): Promise<void>;
  /** A change of the stored library through the coordinator; the library is read again either way. */
  storeAction(action: () => Promise<unknown>): Promise<void>;
}

export async function createDemo(s: ScanActionsHost) {
  s.demoBusy = true;
  s.demoFraction = 0;
  try {
    const meta = await s.client.createDemo({ onProgress: (p) => (s.demoFraction = p.fraction) });
    await s.refreshLibrary();
    await s.selectScan(meta.id);
  } catch (err) {
    s.alert = `The demo scan could not be made: ${errorText(err)}`;
  } finally {
    s.demoBusy = false;
  }
}

/** The cone-beam demo, made only when asked for (the first visit stays quick). */
export async function createConeDemo(s: ScanActionsHost) {
  s.coneDemoBusy = true;
  s.coneDemoFraction = 0;
  try {
    const meta = await s.client.createConeDemo({ onProgress: (p) => (s.coneDemoFraction = p.fraction) });
    await s.refreshLibrary();
    await s.selectScan(meta.id);
  } catch (err) {
    s.alert = `The cone-beam demo could not be made: ${errorText(err)}`;
  } finally {
    s.coneDemoBusy = false;
  }
}

export async function importFiles(s: ScanActionsHost, files: File[]) {
  s.importing = true;
  s.importError = '';
  try {
    s.importController = new AbortController();
    s.importFraction = 0;
    const meta = await s.client.importScan(files, {
      reduce: s.importReduce, signal: s.importController.signal, onProgress: (p) => (s.importFraction = p.fraction),
    });
    await s.refreshLibrary();
    await s.selectScan(meta.id);
    s.tab = 'scan';
  } catch (err) {
    s.importError = refusal(err, 'Import failed');
  } finally {
    s.importing = false;
  }
}

/** Adds an image file to the scan as a result and shows it beside those ticked. */
export async function importImage(s: ScanActionsHost, scanId: string, files: File[], slice?: number) {
  s.imageImport = { busy: true, error: '' };
  try {
    const meta = await s.client.importImage(scanId, files, slice);
    await s.refreshLibrary();
    if (s.selectedScanId === scanId && !s.compared.ids.includes(meta.id)) await s.compared.toggle(meta.id);
    s.imageImport = { busy: false, error: '' };
  } catch (err) {
    s.imageImport = { busy: false, error: refusal(err, 'The image could not be added') };
  }
}

/** A stored result as a DICOM CT series: encoded in the worker, handed to the download as the Blob it sends back. */
export async function exportDicom(s: ScanActionsHost, id: string) {
  s.dicomExport = { busy: true, error: '' };
  try {
    const out = await s.client.exportDicom(id);
    saveFile(out.blob, fileName(out.name, out.kind), out.blob.type);
    s.dicomExport = { busy: false, error: '', note: out.warnings.join('; ') || undefined };
  } catch (err) {
    s.dicomExport = { busy: false, error: err instanceof InputError ? err.message : `The DICOM export failed: ${errorText(err)}` };
  }
}

/** Sets the scan's mu_water (by hand or from a drawn region); its results' images and figures follow. */
export async function calibrate(s: ScanActionsHost, scanId: string, detail: { muWater: number } | { resultId: string; region: { cx: number; cy: number; radius: number }; materialHu: number }) {
  s.calibrating = { busy: true, error: '' };
  try {
    await s.client.calibrate({ scanId, ...detail });
    await s.refreshLibrary();
    // Loaded images carry the old mu_water: load them again, and the comparisons with them.
    // (A stored reference carries its own mu_water: it stays as it is.)
    s.compared.forget(new Set(s.results.filter((r) => r.scanId === scanId).map((r) => r.id)));
    if (s.selectedScanId === scanId) {
      await s.compared.load(s.compared.ids);
      await s.compared.updateComparisons();
    }
    s.calibrating = { busy: false, error: '' };
  } catch (err) {
    s.calibrating = { busy: false, error: refusal(err, 'The calibration failed') };
  }
}

/** Changes the scan's knowledge through the coordinator (checked there; a refusal is shown and nothing is stored). */
export async function changeKnowledge(s: ScanActionsHost, request: KnowledgeRequest): Promise<boolean> {
  s.knowledgeState = { busy: true, error: '' };
  try {
    await s.client.changeKnowledge(request);
    await s.refreshLibrary();
    s.knowledgeState = { busy: false, error: '' };
    return true;
  } catch (err) {
    s.knowledgeState = { busy: false, error: refusal(err, 'The knowledge could not be stored') };
    return false;
  }
}

/** The demo's known region and outline, then the runs that compare them (on the ground truth's grid). */
export async function showKnowledgeDemo(s: ScanActionsHost, scanId: string) {
  if (!(await changeKnowledge(s, { kind: 'demo', scanId }))) return;
  const scan = s.scans.find((x) => x.id === scanId);
  if (!scan) return;
  const g = s.loaded?.id === scanId ? s.loaded.referenceGrid : undefined;
  const runs = demoRuns(knowledgeOf(scan), s.results.filter((r) => r.scanId === scanId), g ? { size: g.nx, pixel: g.dx } : undefined);
  for (const r of runs) await s.queue.add(scan, r.recipe as unknown as Record<string, unknown>, r.name);
}

export async function deleteScan(s: ScanActionsHost, id: string) {
  for (const j of s.queue.jobs) if (j.scanId === id && (j.state === 'waiting' || j.state === 'running')) s.queue.cancel(j.key);
  await s.storeAction(() => s.client.deleteScan(id));
  if (s.selectedScanId === id) {
    s.loaded = undefined;
    s.selectedScanId = '';
    if (s.scans.length) await s.selectScan(s.scans[0].id);
  }
}

export async function applyGeometry(s: ScanActionsHost, geometry: unknown) {
  try {
    await s.client.setScanGeometry(s.selectedScanId, geometry);
    s.geometryError = '';
    await s.refreshLibrary();
    await s.selectScan(s.selectedScanId);
  } catch (err) {
    s.geometryError = errorText(err);
  }
}
