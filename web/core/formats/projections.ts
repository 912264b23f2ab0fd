// Projection data as read from any format, before geometry is attached and intensities are
// converted: [view][row][channel], channel fastest.
import { InputError } from '../errors';

export type ProjectionQuantity = 'line-integral' | 'intensity';

export interface ProjectionData {
  channels: number;
  rows: number;
  views: number;
  data: Float32Array;
  /** What the file says the values are; undefined when it does not say. */
  quantity?: ProjectionQuantity;
  /** Geometry carried by the file, not yet checked against the data. */
  geometry?: unknown;
  muWater?: number;
  /** Unattenuated level recorded in the file (rimfill.i0). */
  i0?: number;
  notes?: Record<string, string>;
  format: string;
}

/** Axis sizes [channels, rows, views] from a file's 2 or 3 sizes (2: channels, views). */
export function projectionAxes(sizes: readonly number[], what: string): [number, number, number] | string {
  if (sizes.length === 3) return [sizes[0], sizes[1], sizes[2]];
  if (sizes.length === 2) return [sizes[0], 1, sizes[1]];
  return `${what}: got ${sizes.length} axes (${sizes.join(' x ')}), expected <channels> [rows] <views>`;
}

/** A geometry JSON text from a file, parsed (validation happens when attached). */
export function parseGeometryText(text: string | undefined, field: string): unknown {
  if (text === undefined) return undefined;
  try {
    return JSON.parse(text);
  } catch {
    throw new InputError(`${field}: not valid JSON (starts "${text.slice(0, 40)}")`);
  }
}

/** A positive finite number from a file's key, or undefined when absent. */
export function positiveKey(text: string | undefined, field: string, expected: string): number | undefined {
  if (text === undefined) return undefined;
  const v = Number(text);
  if (!(v > 0) || !Number.isFinite(v)) throw new InputError(`${field}: got "${text.slice(0, 40)}", expected ${expected}`);
  return v;
}
