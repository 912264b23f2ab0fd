// Builds the frequency response of an FBP filter in a workspace, with the FFT tables that
// filterViews needs. The kernel (spatial domain) comes from filter-design.ts.
import type { Buf, Workspace } from '../engine/workspace';
import type { Geometry } from '../geometry/types';
import { applyWindow, equiangularKernel, paddedLength, rampKernel, type FilterWindow } from './filter-design';

export interface FilterTables {
  nPad: number;
  twRe: Buf;
  twIm: Buf;
  bitrev: Buf;
  /** Real response, including the 1/nPad of the inverse transform. */
  response: Buf;
}

/**
 * Sample spacing the ramp acts on: the detector pitch for parallel beams; for a flat fan-beam
 * detector the pitch scaled to a virtual detector through the isocentre (pitch R / D, Kak &
 * Slaney ch. 3.4.2); for an equiangular detector the angular step pitch / D (radians).
 */
export function filterSpacing(g: Geometry): number {
  const p = g.detector.pitch[0];
  if (g.kind === 'parallel') return p;
  const R = g.sourceIsocenter!, D = g.sourceDetector!;
  return g.detector.shape === 'curved' ? p / D : (p * R) / D;
}

/** Spatial-domain kernel for a geometry, circular layout of length nPad. */
export function filterKernel(g: Geometry, nPad: number): Float32Array {
  const s = filterSpacing(g);
  return g.kind === 'fan' && g.detector.shape === 'curved' ? equiangularKernel(nPad, s) : rampKernel(nPad, s);
}

/** Lays out FFT tables and the filter response for rows of `channels` samples. */
export async function prepareFilter(
  ws: Workspace, g: Geometry, channels: number, window: FilterWindow, cutoff: number,
): Promise<FilterTables> {
  const nPad = paddedLength(channels);
  const t: FilterTables = {
    nPad,
    twRe: ws.alloc('twRe', nPad),
    twIm: ws.alloc('twIm', nPad),
    bitrev: ws.alloc('bitrev', nPad),
    response: ws.alloc('response', nPad),
  };
  const kernel = ws.alloc('kernel', nPad);
  const [re, im] = [ws.alloc('fftRe', nPad), ws.alloc('fftIm', nPad)];
  await ws.run([{ kernel: 'fftPrepare', args: [nPad, t.twRe, t.twIm, t.bitrev], writes: [t.twRe, t.twIm, t.bitrev] }]);
  await ws.write(kernel, filterKernel(g, nPad));
  await ws.run([{ kernel: 'realEvenResponse', args: [kernel, nPad, t.response, t.twRe, t.twIm, t.bitrev, re, im] }]);
  const h = applyWindow(await ws.read(t.response), window, cutoff);
  for (let k = 0; k < nPad; k++) h[k] /= nPad;
  await ws.write(t.response, h);
  return t;
}
