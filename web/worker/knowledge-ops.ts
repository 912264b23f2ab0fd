// The knowledge a user keeps with a scan, changed through the coordinator (its only writer):
// known regions drawn or typed (circles, mm and HU) or from a mask file, edited (value, label)
// and deleted; the outline drawn, typed, taken from the data's suggestion, from a threshold of a
// stored image, or from a mask file. Each change is checked as a run would check it
// (knowledge-check.ts) and stored in one transaction (store/knowledge.ts); bad input stores
// nothing and the message names the region or the outline at fault.
import { InputError } from '../core/errors';
import { huToMu, type KnownCircle, type KnownRegion, type Outline } from '../core/knowledge';
import { maskContour } from '../core/knowledge/mask-contour';
import { thresholdMask } from '../core/knowledge/threshold-mask';
import type { RunHooks } from '../core/run-hooks';
import type { UseStore } from '../store/db';
import { knowledgeOf, maskNamesOf, putScanKnowledge, recipeKnowledgeOf, type NewMask } from '../store/knowledge';
import type { ScanKnowledge, ScanMeta, StoredMask } from '../store/records';
import { getScanMeta, newId } from '../store/scans';
import { demoKnowledge } from '../core/knowledge/demo';
import type { InputFile } from './import-scan';
import { checkScanKnowledge, knowledgeImage, type KnowledgeImage } from './knowledge-check';
import { readImageFiles } from './read-image-files';

/** Where a drawn outline came from. */
export type OutlineSource = 'drawn' | 'typed' | 'suggested by the data';

/** A change of a scan's knowledge. `on`: the image it was drawn on (or the highlighted one), which the check uses. */
export type KnowledgeRequest =
  | { kind: 'add-region'; scanId: string; region: KnownCircle; on?: KnowledgeImage }
  | { kind: 'edit-region'; scanId: string; regionId: string; hu: number; label?: string; on?: KnowledgeImage }
  | { kind: 'delete-region'; scanId: string; regionId: string }
  | { kind: 'set-outline'; scanId: string; outline: Exclude<Outline, { shape: 'mask' }>; source: OutlineSource; on?: KnowledgeImage }
  | { kind: 'delete-outline'; scanId: string }
  | { kind: 'threshold-outline'; scanId: string; image: KnowledgeImage; levelHu: number }
  | { kind: 'mask-file'; scanId: string; files: InputFile[]; slice?: number; use: { as: 'outline' } | { as: 'region'; hu: number; label?: string }; on?: KnowledgeImage }
  | { kind: 'demo'; scanId: string };

/** The new knowledge and the masks it adds. */
interface Change {
  next: ScanKnowledge;
  added?: NewMask[];
  on?: KnowledgeImage;
  /** False for deletions: taking knowledge away never makes it wrong, and is always allowed. */
  check?: false;
}

const withoutMasksUnused = (k: ScanKnowledge): ScanKnowledge => {
  const used = new Set(maskNamesOf(recipeKnowledgeOf(k)));
  return { ...k, masks: k.masks.filter((m) => used.has(m.name)) };
};

/** A mask name not yet taken by the scan's masks. */
function freeName(k: ScanKnowledge, wanted: string): string {
  const taken = new Set(k.masks.map((m) => m.name));
  let name = wanted, n = 2;
  while (taken.has(name)) name = `${wanted} (${n++})`;
  return name;
}

function newMask(name: string, image: { grid: StoredMask['grid'] }, data: Uint8Array, source: string): NewMask {
  let pixels = 0;
  for (let q = 0; q < data.length; q++) pixels += data[q];
  return { mask: { id: newId(), name, grid: image.grid, pixels, contour: maskContour(data, image.grid), source }, data };
}

function regionAt(k: ScanKnowledge, regionId: string): number {
  const i = k.regions.findIndex((r) => r.id === regionId);
  if (i < 0) throw new InputError('known region: it is no longer kept with the scan (deleted meanwhile?)');
  return i;
}

function finiteHu(hu: unknown, what: string): number {
  if (typeof hu !== 'number' || !Number.isFinite(hu)) throw new InputError(`${what} value: got ${JSON.stringify(hu) ?? String(hu)}, expected a number in HU`, { field: 'hu' });
  return hu;
}

/** Words for the image a region or outline was drawn on. */
async function drawnOn(store: UseStore, scan: ScanMeta, on: KnowledgeImage | undefined, fallback: string): Promise<string> {
  const img = await knowledgeImage(store, scan, on);
  return img ? `${fallback} on ${img.name}` : fallback;
}

/** The outline a threshold of a stored image gives, as a mask kept with the scan. */
async function thresholdChange(store: UseStore, scan: ScanMeta, k: ScanKnowledge, on: KnowledgeImage, levelHu: number): Promise<Change> {
  const level = finiteHu(levelHu, 'outline threshold');
  const img = (await knowledgeImage(store, scan, on))!;
  const muWater = img.image.muWater ?? scan.muWater;
  if (!muWater) {
    throw new InputError('outline threshold: the level is in HU and the scan has no mu of water', { field: 'muWater', remedy: { cli: 'calibrate the scan first', page: "set the scan's mu of water first (HU calibration, in the Images tab)" } });
  }
  const { mask, parts } = thresholdMask(img.image, huToMu(level, muWater), 'outline threshold');
  const source = `threshold at ${level} HU of ${img.name} (${parts === 1 ? 'one part' : `${parts} parts`}, holes filled)`;
  const m = newMask(freeName(k, `threshold ${level} HU of ${img.name}`), img.image, mask, source);
  return { next: { ...k, outline: { outline: { shape: 'mask', input: m.mask.name }, source }, masks: [...k.masks, m.mask] }, added: [m], on };
}

/** A mask file as the outline or a known region. */
async function maskFileChange(scan: ScanMeta, k: ScanKnowledge, req: Extract<KnowledgeRequest, { kind: 'mask-file' }>): Promise<Change> {
  const read = await readImageFiles(req.files, scan.muWater, req.slice);
  const data = Uint8Array.from(read.value.data, (v) => (v > 0.5 ? 1 : 0));
  if (!data.some((v) => v)) throw new InputError(`mask file ${read.name}: no pixel is above 0.5; a mask holds 1 inside and 0 outside`);
  const source = `mask file ${read.name}`;
  const m = newMask(freeName(k, read.name), read.value, data, source);
  const masks = [...k.masks, m.mask];
  if (req.use.as === 'outline') return { next: { ...k, outline: { outline: { shape: 'mask', input: m.mask.name }, source }, masks }, added: [m], on: req.on };
  const label = req.use.label?.trim();
  const region: KnownRegion = { shape: 'mask', input: m.mask.name, hu: finiteHu(req.use.hu, 'known region'), ...(label ? { label } : {}) };
  return { next: { ...k, regions: [...k.regions, { id: newId(), region, source }], masks }, added: [m], on: req.on };
}

/** The demo's known region and outline (the 2D demo scan only). */
function demoChange(scan: ScanMeta, k: ScanKnowledge): Change {
  if (scan.source.type !== 'demo' || scan.geometry.kind === 'cone') throw new InputError(`the scan "${scan.name}" is not the 2D demo scan: its knowledge is the user's own to give`);
  const d = demoKnowledge();
  const has = k.regions.some((r) => JSON.stringify(r.region) === JSON.stringify(d.region));
  return {
    next: { ...k, regions: has ? k.regions : [...k.regions, { id: newId(), region: d.region, source: d.regionSource }], outline: { outline: d.outline, source: d.outlineSource } },
  };
}

/** The change a request makes to the scan's knowledge `k`. */
async function changeOf(store: UseStore, scan: ScanMeta, k: ScanKnowledge, req: KnowledgeRequest): Promise<Change> {
  switch (req.kind) {
    case 'add-region': {
      const source = await drawnOn(store, scan, req.on, 'drawn');
      return { next: { ...k, regions: [...k.regions, { id: newId(), region: req.region, source }] }, on: req.on };
    }
    case 'edit-region': {
      const i = regionAt(k, req.regionId);
      const label = req.label?.trim();
      const { label: _old, ...rest } = k.regions[i].region;
      const region = { ...rest, hu: finiteHu(req.hu, `known region ${i + 1}`), ...(label ? { label } : {}) } as KnownRegion;
      return { next: { ...k, regions: k.regions.map((r, j) => (j === i ? { ...r, region } : r)) }, on: req.on };
    }
    case 'delete-region':
      return { next: { ...k, regions: k.regions.filter((_, j) => j !== regionAt(k, req.regionId)) }, check: false };
    case 'set-outline':
      return { next: { ...k, outline: { outline: req.outline, source: await drawnOn(store, scan, req.on, req.source) } }, on: req.on };
    case 'delete-outline':
      return { next: { regions: k.regions, masks: k.masks }, check: false };
    case 'threshold-outline':
      return thresholdChange(store, scan, k, req.image, req.levelHu);
    case 'mask-file':
      return maskFileChange(scan, k, req);
    case 'demo':
      return demoChange(scan, k);
  }
}

/** Applies a knowledge change to a stored scan: checked, then stored in one transaction; returns the scan as stored. */
export async function changeKnowledge(store: UseStore, req: KnowledgeRequest, hooks: RunHooks = {}): Promise<ScanMeta> {
  if (typeof req?.scanId !== 'string') throw new InputError('knowledge: a scan must be chosen');
  const scan = await getScanMeta(req.scanId, store);
  const before = knowledgeOf(scan);
  hooks.onProgress?.(0, 'checking');
  const change = await changeOf(store, scan, before, req);
  const next = withoutMasksUnused(change.next);
  if (change.check !== false) await checkScanKnowledge(store, scan, next, change.added ?? [], change.on);
  hooks.onProgress?.(0.9, 'storing');
  return putScanKnowledge(store, scan.id, before, next, (change.added ?? []).filter((m) => next.masks.some((x) => x.id === m.mask.id)));
}
