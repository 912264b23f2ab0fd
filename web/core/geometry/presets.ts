// Built-in geometries for demos and examples (invented, typical of clinical fan-beam CT).
import { InputError } from '../errors';
import type { Geometry } from './types';
import { validateGeometry } from './validate';

const PRESETS: Record<string, unknown> = {
  // Fan beam, flat detector wide enough for the whole thorax phantom with arms (FOV radius 287 mm).
  demo: {
    kind: 'fan',
    detector: { shape: 'flat', channels: 1100, rows: 1, pitch: [1.0, 1.0], offset: [0, 0] },
    sourceIsocenter: 600,
    sourceDetector: 1000,
    anglesDeg: { start: 0, step: 0.5, count: 720 },
  },
  'demo-curved': {
    kind: 'fan',
    detector: { shape: 'curved', channels: 1100, rows: 1, pitch: [1.0, 1.0], offset: [0, 0] },
    sourceIsocenter: 600,
    sourceDetector: 1000,
    anglesDeg: { start: 0, step: 0.5, count: 720 },
  },
  'demo-parallel': {
    kind: 'parallel',
    detector: { shape: 'flat', channels: 1160, rows: 1, pitch: [0.5, 0.5], offset: [0, 0] },
    anglesDeg: { start: 0, step: 0.5, count: 360 },
  },
  // Cone beam, C-arm-like flat panel (384 x 288 mm, binned to 1 mm cells) on a 200 degree short
  // scan (180 degrees + the 18.2 degree fan): FOV radius 118 mm, half height 90 mm on the axis,
  // so the demo thorax (340 mm wide) is truncated, as in interventional CBCT.
  'demo-cone': {
    kind: 'cone',
    detector: { shape: 'flat', channels: 384, rows: 288, pitch: [1.0, 1.0], offset: [0, 0] },
    sourceIsocenter: 750,
    sourceDetector: 1200,
    anglesDeg: { start: 0, step: 0.5, count: 400 },
  },
};

export const PRESET_NAMES = Object.keys(PRESETS);

/** A built-in geometry by name, or undefined when the name is not one. */
export function presetGeometry(name: string): Geometry | undefined {
  return PRESETS[name] ? validateGeometry(structuredClone(PRESETS[name])) : undefined;
}

/** Keeps `channels` channels of the detector, centred on the centre channel plus `offsetMm`. */
export function cropDetector(g: Geometry, channels: number, offsetMm = 0): { geometry: Geometry; first: number } {
  const d = g.detector;
  if (!Number.isInteger(channels) || channels < 1 || channels > d.channels) {
    throw new InputError(`channels: got ${channels}, expected a whole number from 1 to ${d.channels}`);
  }
  const shift = Math.round(offsetMm / d.pitch[0]);
  const first = Math.round((d.channels - channels) / 2) + shift;
  if (first < 0 || first + channels > d.channels) {
    throw new InputError(`detector offset: got ${offsetMm} mm, which moves ${channels} channels off the ${d.channels}-channel detector`);
  }
  // Channel k of the new detector is channel first + k of the old one.
  const u0Old = -((d.channels - 1) / 2) * d.pitch[0] + d.offset[0];
  const u0New = u0Old + first * d.pitch[0];
  const offset = u0New + ((channels - 1) / 2) * d.pitch[0];
  return {
    geometry: { ...g, detector: { ...d, channels, offset: [offset, d.offset[1]] } },
    first,
  };
}

/**
 * The same geometry with `left` channels added before channel 0 and `right` after the last
 * (same pitch): the extended detector that extrapolation and prior-guided methods fill.
 * Channel k of the original detector is channel left + k of the extended one.
 */
export function extendDetector(g: Geometry, left: number, right: number): Geometry {
  const d = g.detector;
  if (!Number.isInteger(left) || !Number.isInteger(right) || left < 0 || right < 0) {
    throw new InputError(`detector extension: got ${left} + ${right} channels, expected whole numbers >= 0`);
  }
  const channels = d.channels + left + right;
  const u0 = -((d.channels - 1) / 2) * d.pitch[0] + d.offset[0] - left * d.pitch[0];
  const offset = u0 + ((channels - 1) / 2) * d.pitch[0];
  return { ...g, detector: { ...d, channels, offset: [offset, d.offset[1]] } };
}
