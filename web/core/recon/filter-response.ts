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

/**
 * Distance between neighbouring rays at the isocentre, mm: the filter's sample spacing, with
 * the angular step of an equiangular detector taken at the source-to-isocentre distance.
 */
export function isocentreSampling(g: Geometry): number {
  const s = filterSpacing(g);
  return g.kind === 'fan' && g.detector.shape === 'curved' ? s * g.sourceIsocenter! : s;
}

/** Nyquist frequency of the detector sampling at the isocentre, line pairs per cm: 10 / (2 spacing in mm). */
export function nyquistLpPerCm(g: Geometry): number {
  return 5 / isocentreSampling(g);
}

/**
 * Where the filter window ends, as a fraction of the Nyquist frequency, for a band limit in line
 * pairs per cm at the isocentre (absent: the full band). A limit above the Nyquist frequency
 * keeps the full band and says so.
 */
export function bandEdge(g: Geometry, bandLimit: number | undefined): { edge: number; warning?: string } {
  if (bandLimit === undefined) return { edge: 1 };
  const nyquist = nyquistLpPerCm(g);
  if (bandLimit < nyquist) return { edge: bandLimit / nyquist };
  return { edge: 1, warning: `band limit ${bandLimit} lp/cm is at or above the detector's Nyquist frequency at the isocentre (${nyquist.toPrecision(3)} lp/cm): the full band is used` };
}

/** Spatial-domain kernel for a geometry, circular layout of length nPad. */
export function filterKernel(g: Geometry, nPad: number): Float32Array {
  const s = filterSpacing(g);
  return g.kind === 'fan' && g.detector.shape === 'curved' ? equiangularKernel(nPad, s) : rampKernel(nPad, s);
}

/** Lays out FFT tables and the filter response for rows of `channels` samples (window ending at `edge` x Nyquist). */
export async function prepareFilter(
  ws: Workspace, g: Geometry, channels: number, window: FilterWindow, edge: number,
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
  const h = applyWindow(await ws.read(t.response), window, edge);
  for (let k = 0; k < nPad; k++) h[k] /= nPad;
  await ws.write(t.response, h);
  return t;
}
