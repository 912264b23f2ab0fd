// A scan's knowledge checked before it is stored, as a run will check it (core/knowledge: shapes
// and values, then each region and the outline placed on a grid): a region outside the measured
// field of view or over no pixel of the image, regions that contradict each other, an outline
// that leaves out the object where the scan measured it. The message names the region or the
// outline at fault; the caller stores nothing.
import { InputError } from '../core/errors';
import { fovRadius } from '../core/geometry/view-vectors';
import type { Image2D } from '../core/image';
import { placeKnowledge, validateKnowledge } from '../core/knowledge';
import { chooseGrid } from '../core/recipe/grid';
import type { UseStore } from '../store/db';
import { loadMasks, maskNamesOf, recipeKnowledgeOf, type NewMask } from '../store/knowledge';
import type { ScanKnowledge, ScanMeta } from '../store/records';
import { loadResultImage } from '../store/results';
import { loadScan } from '../store/scans';

/** The image the knowledge was drawn on (or is checked against): a result of the scan, or its reference. */
export type KnowledgeImage = { resultId: string } | 'reference';

/** The image (mu) a check places the knowledge on, with its name; undefined: the scan's default grid. */
export async function knowledgeImage(store: UseStore, scan: ScanMeta, on: KnowledgeImage | undefined): Promise<{ image: Image2D; name: string } | undefined> {
  if (!on) return undefined;
  if (on === 'reference') {
    const { reference } = await loadScan(scan.id, store);
    if (!reference) throw new InputError(`the scan "${scan.name}" has no reference image`);
    return { image: reference, name: 'the reference image' };
  }
  const { meta, image } = await loadResultImage(on.resultId, store);
  if (meta.scanId !== scan.id) throw new InputError(`the result "${meta.name}" belongs to another scan`);
  return { image, name: `“${meta.name}”` };
}

/**
 * Checks `next` for the scan: JSON shapes and values, then placed on the grid of `on` (the image
 * it was drawn on, which also shows where the object lies in the field of view) or, without one,
 * the grid a recipe would get. Throws InputError naming the region or outline at fault.
 */
export async function checkScanKnowledge(store: UseStore, scan: ScanMeta, next: ScanKnowledge, added: NewMask[], on: KnowledgeImage | undefined): Promise<void> {
  const knowledge = validateKnowledge(recipeKnowledgeOf(next));
  if (!knowledge) return;
  const fresh = new Set(added.map((m) => m.mask.name));
  const masks = await loadMasks(store, { ...scan, knowledge: next }, maskNamesOf(knowledge).filter((n) => !fresh.has(n)));
  for (const m of added) masks[m.mask.name] = { grid: m.mask.grid, data: Float32Array.from(m.data), quantity: 'mu' };
  const drawnOn = await knowledgeImage(store, scan, on);
  const fov = fovRadius(scan.geometry);
  if (drawnOn) {
    const { image } = drawnOn;
    placeKnowledge(knowledge, { grid: image.grid, fovRadius: fov, muWater: scan.muWater, masks, image: image.muWater && scan.muWater ? image.data : undefined });
    return;
  }
  const { scan: loaded } = await loadScan(scan.id, store);
  placeKnowledge(knowledge, { grid: chooseGrid(loaded), fovRadius: fov, muWater: scan.muWater, masks });
}
