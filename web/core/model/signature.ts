// A model's graph inputs and outputs as the runtime reads them, and the check of that signature
// against the model description (README, "Your own network as a prior": NCHW float32 tensors with N = C = 1).
import { InputError } from '../errors';
import type { ModelInfo } from './description';

/** One graph input or output. */
export interface TensorSignature {
  name: string;
  /** False for non-tensor values (sequences, maps). */
  isTensor: boolean;
  /** Element type as the runtime names it ("float32", "float64", ...). */
  type?: string;
  /** Dimensions: sizes or symbolic names; empty when the model does not declare a shape. */
  shape: ReadonlyArray<number | string>;
}

export interface ModelSignature {
  inputs: TensorSignature[];
  outputs: TensorSignature[];
}

const AXES = ['N (batch)', 'C (channels)', 'H (rows)', 'W (columns)'];

const showShape = (s: ReadonlyArray<number | string>): string => `[${s.map((d) => (typeof d === 'string' ? `"${d}"` : d)).join(', ')}]`;

function find(list: TensorSignature[], name: string, side: 'input' | 'output'): TensorSignature {
  const t = list.find((x) => x.name === name);
  if (!t) {
    throw new InputError(`model ${side}: the description names "${name}", but the model's ${side}s are ${list.map((x) => `"${x.name}"`).join(', ') || 'none'}`);
  }
  return t;
}

/** Checks element type, rank and the N = C = 1 axes; returns the H and W entries (or undefined when undeclared). */
function checkNchw(t: TensorSignature, side: 'input' | 'output', warnings: string[]): [number | string, number | string] | undefined {
  if (!t.isTensor) throw new InputError(`model ${side} "${t.name}": not a tensor, expected an NCHW float32 tensor`);
  if (t.type !== 'float32') throw new InputError(`model ${side} "${t.name}": element type ${t.type ?? 'unknown'}, expected float32`);
  if (t.shape.length === 0) {
    warnings.push(`model ${side} "${t.name}" declares no shape; it is checked when the network runs`);
    return undefined;
  }
  if (t.shape.length !== 4) throw new InputError(`model ${side} "${t.name}": shape ${showShape(t.shape)} has rank ${t.shape.length}, expected rank 4 (NCHW, N = C = 1)`);
  for (const axis of [0, 1]) {
    const d = t.shape[axis];
    if (typeof d === 'number' && d !== 1) {
      throw new InputError(`model ${side} "${t.name}": shape ${showShape(t.shape)} has ${AXES[axis]} = ${d}, expected 1 (one image, one channel)`);
    }
  }
  return [t.shape[2], t.shape[3]];
}

/**
 * Checks the model's signature against its description: the named input and output exist, are
 * float32 NCHW tensors with N = C = 1, and fixed input sizes match the description's grid.
 * Returns warnings for what can only be checked at run time. Throws InputError otherwise.
 */
export function checkSignature(info: ModelInfo, sig: ModelSignature): string[] {
  const warnings: string[] = [];
  if (sig.inputs.length !== 1) {
    throw new InputError(`model inputs: the model has ${sig.inputs.length} inputs (${sig.inputs.map((x) => `"${x.name}"`).join(', ')}), expected exactly one image input`);
  }
  const input = find(sig.inputs, info.input.name, 'input');
  const output = find(sig.outputs, info.output.name, 'output');
  const hw = checkNchw(input, 'input', warnings);
  checkNchw(output, 'output', warnings);
  if (!hw) return warnings;
  const fixed = hw.filter((d): d is number => typeof d === 'number');
  if (fixed.length === 0) return warnings;
  const size = info.input.size;
  if (size === undefined) {
    throw new InputError(
      `model input "${input.name}": the model fixes its image size (${showShape(input.shape)}) but the description has no input.size ` +
        `("the reconstruction grid"); add "size": ${fixed[0]} to the description`,
    );
  }
  for (const [i, d] of hw.entries()) {
    if (typeof d === 'number' && d !== size) {
      throw new InputError(`model input "${input.name}": shape ${showShape(input.shape)} has ${AXES[2 + i]} = ${d}, but the description's input.size is ${size}`);
    }
  }
  return warnings;
}
