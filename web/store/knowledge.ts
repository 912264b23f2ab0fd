// The knowledge kept with a scan (ScanMeta.knowledge: known regions, the outline, the masks they
// name) and the masks' pixels. Written only by the coordinator's knowledge op, in one
// transaction that re-reads the scan: an edit made meanwhile (another tab) is never overwritten,
// and a mask no region or outline names any more is deleted with the change that dropped it.
import { getMany, type UseStore } from 'idb-keyval';
import { InputError } from '../core/errors';
import type { Image2D } from '../core/image';
import type { Knowledge } from '../core/knowledge';
import { checkRecord, keys, SCHEMA_VERSION, type MaskData, type ScanKnowledge, type ScanMeta, type StoredMask } from './records';
import { patchRecord, transact } from './transact';

/** A scan's knowledge (empty when it has none). */
export function knowledgeOf(meta: Pick<ScanMeta, 'knowledge'>): ScanKnowledge {
  return meta.knowledge ?? { regions: [], masks: [] };
}

/** The knowledge as a recipe carries it (every region, and the outline). */
export function recipeKnowledgeOf(k: ScanKnowledge): Knowledge {
  return { ...(k.regions.length ? { known: k.regions.map((r) => r.region) } : {}), ...(k.outline ? { outline: k.outline.outline } : {}) };
}

/** Names of the masks a recipe's knowledge uses. */
export function maskNamesOf(k: Knowledge | undefined): string[] {
  const names = (k?.known ?? []).flatMap((r) => (r.shape === 'mask' ? [r.input] : []));
  if (k?.outline?.shape === 'mask') names.push(k.outline.input);
  return [...new Set(names)];
}

/** A mask's pixels as an image (values 0 and 1) for RecipeInputs.masks. */
function maskImage(mask: StoredMask, data: Uint8Array): Image2D {
  return { grid: mask.grid, data: Float32Array.from(data), quantity: 'mu' };
}

/** The scan's masks named `names`, as images by name; a name the scan does not keep throws InputError. */
export async function loadMasks(store: UseStore, meta: ScanMeta, names: string[]): Promise<Record<string, Image2D>> {
  if (!names.length) return {};
  const kept = knowledgeOf(meta).masks;
  const masks = names.map((name) => {
    const m = kept.find((x) => x.name === name);
    if (!m) throw new InputError(`recipe knowledge: the mask "${name}" is not kept with the scan "${meta.name}" (deleted since the recipe was made?)`, { field: 'knowledge' });
    return m;
  });
  const values = await getMany(masks.map((m) => keys.maskData(meta.id, m.id)), store);
  const out: Record<string, Image2D> = {};
  masks.forEach((m, i) => {
    out[m.name] = maskImage(m, checkRecord<MaskData>(values[i], 'mask-data', keys.maskData(meta.id, m.id)).data);
  });
  return out;
}

/** A new mask with its pixels, to store along with the knowledge that names it. */
export interface NewMask {
  mask: StoredMask;
  data: Uint8Array;
}

/**
 * Stores a scan's new knowledge in one transaction: the scan is read again and must still hold
 * `before` (else nothing is written and the user is told to try again), new masks are written,
 * and masks `next` no longer lists are deleted.
 */
export async function putScanKnowledge(store: UseStore, scanId: string, before: ScanKnowledge, next: ScanKnowledge, added: NewMask[] = []): Promise<ScanMeta> {
  return transact(store, async (tx) => {
    const scan = await patchRecord<ScanMeta>(tx, keys.scan(scanId), 'scan', (old) => {
      if (JSON.stringify(knowledgeOf(old)) !== JSON.stringify(before)) {
        throw new InputError(`knowledge of the scan "${old.name}": it was changed meanwhile (in another tab?); nothing was stored: look at it again and repeat the change`);
      }
      return { ...old, knowledge: next };
    });
    for (const m of added) tx.put(keys.maskData(scanId, m.mask.id), { schema: SCHEMA_VERSION, kind: 'mask-data', id: m.mask.id, data: m.data } satisfies MaskData);
    const kept = new Set(next.masks.map((m) => m.id));
    for (const m of before.masks) if (!kept.has(m.id)) tx.delete(keys.maskData(scanId, m.id));
    return scan;
  });
}
