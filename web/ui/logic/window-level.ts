// Display windows: a width and a centre (level) in display units (HU when mu_water is known).
// Linear mapping: lower = L - W/2 maps to black, upper = L + W/2 to white (REFERENCES.md [window-presets]).

export interface DisplayWindow {
  /** Width, display units (> 0). */
  width: number;
  /** Centre, display units. */
  level: number;
}

export interface WindowPreset extends DisplayWindow {
  name: string;
}

/** Presets in HU (REFERENCES.md [window-presets]: radiology teaching values, common practice). */
export const WINDOW_PRESETS: readonly WindowPreset[] = [
  { name: 'Soft tissue', width: 400, level: 40 },
  { name: 'Lung', width: 1500, level: -600 },
  { name: 'Bone', width: 2000, level: 500 },
];

/** Smallest width a drag can reach, display units. */
export const MIN_WIDTH = 1;

/** Values shown as black and white. */
export function windowBounds(w: DisplayWindow): { lower: number; upper: number } {
  return { lower: w.level - w.width / 2, upper: w.level + w.width / 2 };
}

/** Grey level 0..255 of a value (NaN shows as 0). */
export function greyOf(value: number, w: DisplayWindow): number {
  const { lower } = windowBounds(w);
  const g = ((value - lower) / w.width) * 255;
  return g > 255 ? 255 : g > 0 ? Math.round(g) : 0;
}

/**
 * The window after dragging by (dx, dy) screen pixels from `start`: right widens (by a factor
 * e^(dx/150), so the change is proportional at any width), up raises the level by W/300 per
 * pixel (common practice for window/level drags; the rates are our choice).
 */
export function dragWindow(start: DisplayWindow, dx: number, dy: number): DisplayWindow {
  const width = Math.max(MIN_WIDTH, start.width * Math.exp(dx / 150));
  const level = start.level - (dy * start.width) / 300;
  return { width, level };
}

/**
 * A window covering the 1st to 99th percentile of the finite values (a robust first view
 * of an image whose units are not HU).
 */
export function autoWindow(values: Float32Array): DisplayWindow {
  const step = Math.max(1, Math.floor(values.length / 20000));
  const sample: number[] = [];
  for (let i = 0; i < values.length; i += step) if (Number.isFinite(values[i])) sample.push(values[i]);
  if (sample.length === 0) return { width: 1, level: 0 };
  sample.sort((a, b) => a - b);
  const lo = sample[Math.floor(0.01 * (sample.length - 1))];
  const hi = sample[Math.ceil(0.99 * (sample.length - 1))];
  const width = hi - lo > 0 ? hi - lo : Math.abs(hi) || 1;
  return { width, level: (lo + hi) / 2 };
}
