// Rimfill's scan file (design.md "Scan file"): NRRD float32, sizes <channels> <rows> <views>,
// with rimfill.geometry (JSON), rimfill.quantity and optional rimfill.muWater.
import { InputError } from '../errors';
import { checkGeometryMatchesData, validateGeometry } from '../geometry/validate';
import type { Geometry } from '../geometry/types';
import type { Scan } from '../scan';
import { parseNrrd, writeNrrd, DEFAULT_MAX_SAMPLES } from './nrrd';

/** Reads a scan file; `geometry` (from a side file) replaces or supplies the geometry. */
export async function readScanNrrd(bytes: Uint8Array, geometry?: Geometry, maxSamples = DEFAULT_MAX_SAMPLES): Promise<Scan> {
  const n = await parseNrrd(bytes, maxSamples);
  if (n.sizes.length < 2 || n.sizes.length > 3) throw new InputError(`scan: got ${n.sizes.length} axes, expected <channels> [rows] <views>`);
  const [channels, rows, views] = n.sizes.length === 3 ? n.sizes : [n.sizes[0], 1, n.sizes[1]];
  let g = geometry;
  if (!g) {
    const text = n.keys['rimfill.geometry'];
    if (!text) throw new InputError('scan: no rimfill.geometry in the file; give one with --geometry geom.json');
    let parsed: unknown;
    try {
      parsed = JSON.parse(text);
    } catch {
      throw new InputError('scan: rimfill.geometry is not valid JSON');
    }
    g = validateGeometry(parsed);
  }
  checkGeometryMatchesData(g, channels, rows, views);
  const quantity = n.keys['rimfill.quantity'] ?? 'line-integral';
  if (quantity !== 'line-integral') {
    throw new InputError(`scan rimfill.quantity: got "${quantity}", expected line-integral (convert intensities with --flat/--dark/--i0)`);
  }
  const scan: Scan = { geometry: g, data: n.data };
  if (n.keys['rimfill.muWater'] !== undefined) {
    const mw = Number(n.keys['rimfill.muWater']);
    if (!(mw > 0 && mw < 1)) throw new InputError(`scan rimfill.muWater: got "${n.keys['rimfill.muWater']}", expected mu of water in 1/mm (about 0.02)`);
    scan.muWater = mw;
  }
  return scan;
}

/** Writes a scan file. */
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
