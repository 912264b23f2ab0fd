// The model description: the small JSON of ours that says what image a user's network expects
// and what it returns (README, "Your own network as a prior"). Network value = physical value * scale
// + offset, physical values being mu (1/mm) or HU. Tensors are NCHW float32 with N = C = 1.
import { InputError } from '../errors';
import type { ImageQuantity } from '../image';

export const MODEL_FORMAT = 'rimfill-model/1';

/** Largest model grid (pixels along x and y), as for reconstruction grids. */
export const MAX_MODEL_SIZE = 4096;

/** How the network's input image is made from the scan. */
export interface ModelInputSource {
  /** Reconstruction method (a recipe method other than prior), e.g. "fbp". */
  method: string;
  /** Detector extension applied before it (recipe `extend`), e.g. "water"; "none" for none. */
  extend: string;
}

/** One side of the network: tensor name and intensity normalization. */
export interface ModelTensorInfo {
  /** Name of the graph input or output. */
  name: string;
  quantity: ImageQuantity;
  /** network value = physical value * scale + offset (scale != 0). */
  scale: number;
  offset: number;
}

export interface ModelInputInfo extends ModelTensorInfo {
  /** Pixels along x and y; absent: the reconstruction grid. */
  size?: number;
  /** Pixel size, mm; absent with size given: the reconstruction's field over size pixels. */
  pixel?: number;
  from: ModelInputSource;
}

export interface ModelInfo {
  format: typeof MODEL_FORMAT;
  /** Optional label and free-text notes (training data, version) shown with the model. */
  name?: string;
  notes?: string;
  input: ModelInputInfo;
  output: ModelTensorInfo;
}

type Json = Record<string, unknown>;

function isObject(v: unknown): v is Json {
  return typeof v === 'object' && v !== null && !Array.isArray(v);
}

const shown = (v: unknown): string => (typeof v === 'string' ? `"${v}"` : JSON.stringify(v) ?? String(v));

const path = (where: string, key: string): string => (where ? `${where}.${key}` : key);

function onlyKnown(o: Json, where: string, known: string[]): void {
  for (const k of Object.keys(o)) {
    if (!known.includes(k)) throw new InputError(`model description${where ? ` ${where}` : ''}: unknown field "${k}" (known: ${known.join(', ')})`);
  }
}

function text(o: Json, key: string, where: string, optional = false): string | undefined {
  const v = o[key];
  if (v === undefined && optional) return undefined;
  if (typeof v !== 'string' || v.trim() === '') throw new InputError(`model description ${path(where, key)}: got ${shown(v)}, expected a non-empty string`);
  return v;
}

function finite(o: Json, key: string, where: string, fallback: number): number {
  const v = o[key] ?? fallback;
  if (typeof v !== 'number' || !Number.isFinite(v)) throw new InputError(`model description ${path(where, key)}: got ${shown(v)}, expected a finite number`);
  return v;
}

function tensorInfo(o: unknown, where: 'input' | 'output', extra: string[]): ModelTensorInfo {
  if (!isObject(o)) throw new InputError(`model description ${where}: got ${shown(o)}, expected an object`);
  onlyKnown(o, where, ['name', 'quantity', 'scale', 'offset', ...extra]);
  const quantity = o.quantity;
  if (quantity !== 'mu' && quantity !== 'hu') {
    throw new InputError(`model description ${where}.quantity: got ${shown(quantity)}, expected "mu" (1/mm) or "hu"`);
  }
  const scale = finite(o, 'scale', where, 1);
  if (scale === 0) throw new InputError(`model description ${where}.scale: got 0, expected a non-zero factor (network value = physical value * scale + offset)`);
  return { name: text(o, 'name', where)!, quantity, scale, offset: finite(o, 'offset', where, 0) };
}

function inputSource(o: unknown): ModelInputSource {
  if (!isObject(o)) throw new InputError(`model description input.from: got ${shown(o)}, expected {"method": ..., "extend": ...}`);
  onlyKnown(o, 'input.from', ['method', 'extend']);
  const method = text(o, 'method', 'input.from')!;
  if (method === 'prior') throw new InputError('model description input.from.method: got "prior", expected a method that makes an image from the scan alone (e.g. "fbp")');
  return { method, extend: text(o, 'extend', 'input.from', true) ?? 'none' };
}

function gridFields(o: Json): { size?: number; pixel?: number } {
  const { size, pixel } = o;
  if (size !== undefined && (!Number.isInteger(size) || (size as number) < 8 || (size as number) > MAX_MODEL_SIZE)) {
    throw new InputError(`model description input.size: got ${shown(size)}, expected a whole number of pixels from 8 to ${MAX_MODEL_SIZE}`);
  }
  if (pixel !== undefined && (typeof pixel !== 'number' || !(pixel > 0) || pixel > 100)) {
    throw new InputError(`model description input.pixel: got ${shown(pixel)}, expected a pixel size in mm (0 to 100)`);
  }
  if (pixel !== undefined && size === undefined) {
    throw new InputError('model description input.pixel: given without input.size; give both, only size, or neither (the reconstruction grid)');
  }
  return { size: size as number | undefined, pixel: pixel as number | undefined };
}

/**
 * Checks a model description parsed from JSON and fills defaults (scale 1, offset 0, extend
 * "none"). Throws InputError naming the field, the value and what was expected.
 */
export function validateModelInfo(input: unknown): ModelInfo {
  if (!isObject(input)) throw new InputError(`model description: got ${shown(input)}, expected a JSON object`);
  onlyKnown(input, '', ['format', 'name', 'notes', 'input', 'output']);
  if (input.format !== MODEL_FORMAT) throw new InputError(`model description format: got ${shown(input.format)}, expected "${MODEL_FORMAT}"`);
  if (!isObject(input.input)) throw new InputError(`model description input: got ${shown(input.input)}, expected an object`);
  const inputTensor = tensorInfo(input.input, 'input', ['size', 'pixel', 'from']);
  const from = inputSource(input.input.from);
  const info: ModelInfo = {
    format: MODEL_FORMAT,
    input: { ...inputTensor, ...gridFields(input.input), from },
    output: tensorInfo(input.output, 'output', []),
  };
  const name = text(input, 'name', '', true);
  const notes = input.notes === undefined ? undefined : input.notes;
  if (notes !== undefined && typeof notes !== 'string') throw new InputError(`model description notes: got ${shown(notes)}, expected a string`);
  if (name !== undefined) info.name = name;
  if (notes !== undefined) info.notes = notes;
  if (info.input.size === undefined) delete info.input.size;
  if (info.input.pixel === undefined) delete info.input.pixel;
  return info;
}
