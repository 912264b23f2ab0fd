// Detector intensities to line integrals: p = -ln((I - D) / (F - D)), with D the dark frame and
// F the flat (open-beam) frame, or p = -ln((I - D) / I0) with a known unattenuated level I0
// (Beer-Lambert law; REFERENCES.md [transmission-noise]). Readings that cannot be trusted are counted,
// never hidden: non-positive transmissions are clamped, saturated readings capped, non-finite
// readings and bad elements filled from their neighbours.
import { InputError, throwIfCancelled } from '../errors';
import type { RunHooks } from '../run-hooks';
import { applyWaterPolynomial, checkWaterPolynomial } from './beam-hardening';
import { fillBadElements } from './bad-pixels';
import { at, checkFrame, type ReferenceFrame } from './frames';

export interface IntensityCorrection {
  /** Dark (offset) level: one frame or a constant. Default 0. */
  dark?: ReferenceFrame;
  /** Flat (open-beam) level: one frame or a constant. Either this or i0. */
  flat?: ReferenceFrame;
  /** Reading of the unattenuated beam, I0, when there is no flat frame (a constant flat level: the dark is subtracted from it too). */
  i0?: number;
  /** Readings at or above this level are saturated: counted and capped at it. */
  saturation?: number;
  /**
   * Smallest transmission kept: non-positive ones become this. Default: one count, 1 / (F - D),
   * when the open-beam level exceeds 1 (count data, as REFERENCES.md [transmission-noise]), else 1e-6.
   */
  minTransmission?: number;
  /** Bad elements (1 = bad), one frame of rows x channels; filled after the logarithm. */
  badPixels?: Uint8Array;
  /** Water beam-hardening polynomial [c1, c2, ...], applied last. */
  waterPolynomial?: number[];
}

/** What preprocessing found; every count is of individual readings. */
export interface IntensityReport {
  readings: number;
  /** (I - D) <= 0: clamped to the smallest transmission. */
  nonPositive: number;
  /** I >= saturation level: capped. */
  saturated: number;
  /** NaN or infinite readings, filled from neighbours. */
  nonFinite: number;
  /** Elements whose flat is not above their dark, treated as bad. */
  deadInFlat: number;
  /** Readings filled by interpolation (bad elements, non-finite, dead in flat). */
  filled: number;
  /** Detector rows with no good element at all (left unfilled). */
  rowsWithoutGood: number;
}

/** Sentence per non-zero count, for warnings. */
export function describeIntensityReport(r: IntensityReport): string[] {
  const pct = (n: number) => `${n} of ${r.readings} readings (${((100 * n) / r.readings).toPrecision(2)}%)`;
  const out: string[] = [];
  if (r.nonPositive) out.push(`${pct(r.nonPositive)} were at or below the dark level and were clamped to the smallest transmission`);
  if (r.saturated) out.push(`${pct(r.saturated)} were saturated and were capped at the saturation level`);
  if (r.nonFinite) out.push(`${pct(r.nonFinite)} were not finite numbers and were filled from neighbouring channels`);
  if (r.deadInFlat) out.push(`${r.deadInFlat} detector elements have a flat level not above the dark level and were treated as bad`);
  if (r.rowsWithoutGood) out.push(`${r.rowsWithoutGood} detector rows had no good element and were left as read`);
  return out;
}

function checkOptions(o: IntensityCorrection, frame: number): void {
  checkFrame(o.dark, frame, 'dark frame');
  checkFrame(o.flat, frame, 'flat frame');
  if (o.flat === undefined && o.i0 === undefined) {
    throw new InputError('intensity data need a flat frame or the unattenuated level (i0)', {
      remedy: { cli: 'give --flat F or --i0 N', page: 'add the flat-field frames (files named flat…) to the same import' },
    });
  }
  if (o.flat !== undefined && o.i0 !== undefined) throw new InputError('intensity data: give either a flat frame or the unattenuated level (i0), not both');
  if (o.i0 !== undefined && !(o.i0 > 0 && Number.isFinite(o.i0))) throw new InputError(`i0: got ${o.i0}, expected a positive unattenuated intensity`);
  if (o.saturation !== undefined && !(o.saturation > 0)) throw new InputError(`saturation: got ${o.saturation}, expected a positive level`);
  if (o.minTransmission !== undefined && !(o.minTransmission > 0 && o.minTransmission < 1)) {
    throw new InputError(`minimum transmission: got ${o.minTransmission}, expected a number in (0, 1)`);
  }
  if (o.badPixels && o.badPixels.length !== frame) throw new InputError(`bad-pixel mask: got ${o.badPixels.length} values, expected one frame of ${frame}`);
  if (o.waterPolynomial) checkWaterPolynomial(o.waterPolynomial);
}

/**
 * Converts intensities ([view][row][channel]) to line integrals in place and reports what it
 * had to clamp or fill.
 */
export function intensitiesToLineIntegrals(
  data: Float32Array, channels: number, rows: number, o: IntensityCorrection, hooks: RunHooks = {},
): IntensityReport {
  const frame = channels * rows;
  if (data.length % frame !== 0) throw new InputError(`intensity data: ${data.length} values are not whole frames of ${rows} x ${channels}`);
  checkOptions(o, frame);
  const views = data.length / frame;
  // Open-beam signal per element (F - D, or I0) and the elements that cannot be corrected.
  const open = new Float32Array(frame);
  const dead = new Uint8Array(frame);
  let deadInFlat = 0;
  for (let i = 0; i < frame; i++) {
    const d = at(o.dark, i, 0);
    open[i] = o.flat !== undefined ? at(o.flat, i, 0) - d : o.i0! - d;
    if (!(open[i] > 0)) {
      dead[i] = 1;
      deadInFlat++;
    }
    if (o.badPixels?.[i]) dead[i] = 1;
  }
  const report: IntensityReport = { readings: data.length, nonPositive: 0, saturated: 0, nonFinite: 0, deadInFlat, filled: 0, rowsWithoutGood: 0 };
  const unusable = new Uint8Array(data.length); // non-finite readings
  const sat = o.saturation ?? Infinity;
  for (let v = 0; v < views; v++) {
    if (v % 64 === 0) {
      throwIfCancelled(hooks.signal);
      hooks.onProgress?.(v / views, 'intensity to line integral');
    }
    const base = v * frame;
    for (let i = 0; i < frame; i++) {
      let x = data[base + i];
      if (!Number.isFinite(x)) {
        report.nonFinite++;
        unusable[base + i] = 1;
        data[base + i] = 0;
        continue;
      }
      if (x >= sat) {
        report.saturated++;
        x = sat;
      }
      if (dead[i]) {
        data[base + i] = 0;
        continue;
      }
      let t = (x - at(o.dark, i, 0)) / open[i];
      if (!(t > 0)) {
        report.nonPositive++;
        t = o.minTransmission ?? (open[i] > 1 ? 1 / open[i] : 1e-6);
      }
      data[base + i] = -Math.log(t);
    }
  }
  const filled = fillBadElements(data, channels, rows, (v, i) => dead[i] === 1 || unusable[v * frame + i] === 1);
  report.filled = filled.filled;
  report.rowsWithoutGood = filled.rowsWithoutGood;
  if (o.waterPolynomial) applyWaterPolynomial(data, o.waterPolynomial);
  hooks.onProgress?.(1, 'intensity to line integral');
  return report;
}
