// Rimfill's scan file (README, "Files"): NRRD float32, sizes <channels> <rows> <views>,
// with rimfill.geometry (JSON), rimfill.quantity (line-integral | intensity), rimfill.i0 and
// optional rimfill.muWater.
import { InputError } from '../errors';
import type { Scan } from '../scan';
import type { ReadLimits } from './limits';
import type { NamedBytes } from './named-file';
import { parseNrrd, writeNrrd } from './nrrd';
import { parseGeometryText, positiveKey, projectionAxes, type ProjectionData } from './projections';
import type { ProjectionHeader } from './scan-assembly';

/** Reads projection data from NRRD (files[0]; a detached data file among the rest). */
export async function projectionsFromNrrd(files: readonly NamedBytes[], limits?: ReadLimits): Promise<ProjectionData> {
  const n = await parseNrrd(files[0].bytes, { ...limits, files });
  return { ...projectionHeaderFromNrrd(n.sizes, n.keys), data: n.data };
}

/** What an NRRD scan header says about its projections: axes and our rimfill.* keys. */
export function projectionHeaderFromNrrd(sizes: number[], keys: Record<string, string>): ProjectionHeader {
  const axes = projectionAxes(sizes, 'scan');
  if (typeof axes === 'string') throw new InputError(axes);
  const quantity = keys['rimfill.quantity'];
  if (quantity !== undefined && quantity !== 'line-integral' && quantity !== 'intensity') {
    throw new InputError(`scan rimfill.quantity: got "${quantity}", expected line-integral or intensity`);
  }
  const notes: Record<string, string> = {};
  for (const [k, v] of Object.entries(keys)) if (k.startsWith('rimfill.note.')) notes[k.slice(13)] = v;
  return {
    channels: axes[0], rows: axes[1], views: axes[2], quantity,
    geometry: parseGeometryText(keys['rimfill.geometry'], 'scan rimfill.geometry'),
    muWater: positiveKey(keys['rimfill.muWater'], 'scan rimfill.muWater', 'mu of water in 1/mm (about 0.02)'),
    i0: positiveKey(keys['rimfill.i0'], 'scan rimfill.i0', 'the unattenuated intensity'),
    notes, format: 'NRRD',
  };
}

/** Writes a scan file (line integrals, float32). */
export function writeScanNrrd(scan: Scan, compress = false): Promise<Uint8Array> {
  const d = scan.geometry.detector;
  const views = scan.data.length / (d.channels * d.rows);
  const keys: Record<string, string> = {
    'rimfill.geometry': JSON.stringify(scan.geometry),
    'rimfill.quantity': 'line-integral',
  };
  if (scan.muWater !== undefined) keys['rimfill.muWater'] = String(scan.muWater);
  for (const [k, v] of Object.entries(scan.notes ?? {})) keys[`rimfill.note.${k}`] = v.replace(/[\r\n]+/g, ' ');
  return writeNrrd(scan.data, [d.channels, d.rows, views], { kinds: 'space space list', labels: '"channel" "row" "view"' }, keys, compress);
}
