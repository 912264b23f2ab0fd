// Making a scan smaller before it is stored or reconstructed: detector binning (2 x 2 or
// 4 x 4 cells averaged into one), keeping every k-th view, and keeping a range of detector rows.
// The geometry follows (pitch, offsets, angles, or calibrated vectors), so a reduced scan is an
// ordinary scan. Binning averages line integrals (common practice for line-integral data; an
// odd last channel or row is dropped). Rows are cropped first, then binned; views are taken
// from the first on.
import { InputError } from './errors';
import type { Geometry } from './geometry/types';
import { viewCount } from './geometry/types';
import type { ProjectionSource } from './projection-source';

export interface Reduction {
  /** Cells binned along each detector axis: 1 (none), 2 or 4. */
  bin?: number;
  /** Keep views 0, k, 2k, ... */
  viewStep?: number;
  /** Keep detector rows [first, end) (before binning). */
  rows?: [number, number];
}

/** The binning factors offered. */
export const BIN_FACTORS = [1, 2, 4] as const;

/** True when the reduction changes nothing. */
export function isIdentity(r: Reduction | undefined): boolean {
  return !r || ((r.bin ?? 1) === 1 && (r.viewStep ?? 1) === 1 && !r.rows);
}

/**
 * Checks a reduction (from a form, a recipe or CLI options) against a geometry; `field` names
 * it in messages. Returns it normalized (absent parts left out).
 */
export function checkReduction(input: unknown, g: Geometry | undefined, field = 'reduction'): Reduction {
  if (input === undefined) return {};
  if (typeof input !== 'object' || input === null || Array.isArray(input)) throw new InputError(`${field}: expected {bin, viewStep, rows}`);
  const r = input as Record<string, unknown>;
  const out: Reduction = {};
  if (r.bin !== undefined) {
    if (!(BIN_FACTORS as readonly unknown[]).includes(r.bin)) throw new InputError(`${field}.bin: got ${JSON.stringify(r.bin)}, expected 1, 2 or 4 (cells binned along each detector axis)`);
    if (r.bin !== 1) out.bin = r.bin as number;
  }
  if (r.viewStep !== undefined) {
    if (!Number.isInteger(r.viewStep) || (r.viewStep as number) < 1 || (r.viewStep as number) > 1000) throw new InputError(`${field}.viewStep: got ${JSON.stringify(r.viewStep)}, expected a whole number from 1 to 1000 (keep every k-th view)`);
    if (r.viewStep !== 1) out.viewStep = r.viewStep as number;
  }
  if (r.rows !== undefined) {
    const rows = r.rows;
    if (!Array.isArray(rows) || rows.length !== 2 || !rows.every((x) => Number.isInteger(x)) || rows[0] < 0 || rows[1] <= rows[0]) {
      throw new InputError(`${field}.rows: got ${JSON.stringify(rows)}, expected [first, end) with 0 <= first < end (detector rows to keep)`);
    }
    out.rows = [rows[0], rows[1]];
  }
  if (g) reducedGeometry(g, out, field);
  return out;
}

/** The geometry after a reduction; throws InputError when nothing would be left. */
export function reducedGeometry(g: Geometry, r: Reduction, field = 'reduction'): Geometry {
  if (isIdentity(r)) return g;
  const d = g.detector;
  const bin = r.bin ?? 1, step = r.viewStep ?? 1;
  const [r0, r1] = r.rows ?? [0, d.rows];
  if (r1 > d.rows) throw new InputError(`${field}.rows: got [${r0}, ${r1}), the detector has ${d.rows} rows`);
  if (g.kind !== 'cone' && (r.rows || bin > 1)) {
    if (r.rows && (r0 !== 0 || r1 !== 1)) throw new InputError(`${field}.rows: a ${g.kind}-beam scan has one row`);
  }
  const rowBin = g.kind === 'cone' ? bin : 1;
  const channels = Math.floor(d.channels / bin), rows = Math.floor((r1 - r0) / rowBin);
  if (channels < 1 || rows < 1) throw new InputError(`${field}.bin: ${bin} x ${bin} binning of ${d.channels} channels x ${r1 - r0} rows leaves no cells`);
  const views = Math.ceil(viewCount(g) / step);
  // Cell centres: the mean of the binned cells' centres (mm from the old layout's centre).
  const shiftU = ((channels * bin - 1) / 2 - (d.channels - 1) / 2) * d.pitch[0];
  const shiftV = (r0 + (rows * rowBin - 1) / 2 - (d.rows - 1) / 2) * d.pitch[1];
  const detector = {
    ...d, channels, rows,
    pitch: [d.pitch[0] * bin, d.pitch[1] * rowBin] as [number, number],
    offset: [d.offset[0] + shiftU, d.offset[1] + shiftV] as [number, number],
  };
  // Calibrated views keep their focal spot and detector centre (offsets come from the detector);
  // their steps now go from one binned cell to the next, as long as the binned pitches.
  const out: Geometry = { ...g, detector };
  if (g.views) {
    const times = (v: [number, number, number], k: number): [number, number, number] => [v[0] * k, v[1] * k, v[2] * k];
    out.views = g.views.filter((_, i) => i % step === 0).map((w) => ({ ...w, channelStep: times(w.channelStep, bin), rowStep: times(w.rowStep, rowBin) }));
  }
  const a = g.anglesDeg;
  if (a) out.anglesDeg = Array.isArray(a) ? a.filter((_, i) => i % step === 0) : { start: a.start, step: a.step * step, count: views };
  return out;
}

/** One line for reports and the scan's facts, e.g. "2 x 2 binning, every 2nd view, rows 100 to 699". */
export function describeReduction(r: Reduction | undefined): string {
  if (isIdentity(r)) return 'none';
  const parts: string[] = [];
  if (r!.bin && r!.bin > 1) parts.push(`${r!.bin} x ${r!.bin} detector binning`);
  if (r!.viewStep && r!.viewStep > 1) parts.push(`every ${ordinal(r!.viewStep)} view`);
  if (r!.rows) parts.push(`rows ${r!.rows[0]} to ${r!.rows[1] - 1}`);
  return parts.join(', ');
}

function ordinal(n: number): string {
  const s = n % 100 >= 11 && n % 100 <= 13 ? 'th' : ({ 1: 'st', 2: 'nd', 3: 'rd' } as Record<number, string>)[n % 10] ?? 'th';
  return `${n}${s}`;
}

/**
 * Reduces `data` (views [v0, v1) of the original layout, the views the reduction keeps among
 * them) into the reduced layout: crop rows, average bin x bin cells.
 */
export function reduceViews(data: Float32Array, g: Geometry, r: Reduction, out: Float32Array): void {
  const d = g.detector;
  const bin = r.bin ?? 1, rowBin = g.kind === 'cone' ? bin : 1;
  const [r0, r1] = r.rows ?? [0, d.rows];
  const nc = Math.floor(d.channels / bin), nr = Math.floor((r1 - r0) / rowBin);
  const frame = d.channels * d.rows, views = data.length / frame;
  const scale = 1 / (bin * rowBin);
  for (let v = 0; v < views; v++) {
    for (let rr = 0; rr < nr; rr++) {
      const dst = (v * nr + rr) * nc;
      out.fill(0, dst, dst + nc);
      for (let b = 0; b < rowBin; b++) {
        const src = v * frame + (r0 + rr * rowBin + b) * d.channels;
        for (let c = 0; c < nc; c++) {
          let s = 0;
          for (let a = 0; a < bin; a++) s += data[src + c * bin + a];
          out[dst + c] += s;
        }
      }
      for (let c = 0; c < nc; c++) out[dst + c] *= scale;
    }
  }
}

/** A source that reads `source` reduced by `r` (geometry and values). */
export function reduceSource(source: ProjectionSource, r: Reduction): ProjectionSource {
  if (isIdentity(r)) return source;
  const g = source.geometry;
  const geometry = reducedGeometry(g, r);
  const step = r.viewStep ?? 1;
  const frame = g.detector.channels * g.detector.rows;
  const outFrame = geometry.detector.channels * geometry.detector.rows;
  return {
    geometry,
    muWater: source.muWater,
    notes: source.notes,
    chunkViews: source.chunkViews ? Math.max(1, Math.floor(source.chunkViews / step)) : undefined,
    async read(v0, v1) {
      const out = new Float32Array((v1 - v0) * outFrame);
      if (step === 1) {
        reduceViews(await source.read(v0, v1), g, r, out);
        return out;
      }
      // The kept views v * step, read in windows of whole source chunks.
      const window = Math.max(step, source.chunkViews ?? step);
      for (let v = v0; v < v1;) {
        const a = v * step, b = Math.min(viewCount(g), a + window);
        const data = await source.read(a, b);
        for (; v < v1 && v * step < b; v++) {
          const o = (v * step - a) * frame;
          reduceViews(data.subarray(o, o + frame), g, r, out.subarray((v - v0) * outFrame, (v - v0 + 1) * outFrame));
        }
      }
      return out;
    },
  };
}
