// Model import: description, then the runtime's reading of the ONNX file, then the model's
// inputs and outputs against the description. A model that does not fit is refused with the
// reason and its session is closed (a caller storing only after success stores nothing).
import { describe, expect, it } from 'vitest';
import { InputError } from '../../web/core/errors';
import { importModel } from '../../web/core/model/import-model';
import { writeOnnxModel, OnnxType, type OnnxDim } from '../../web/cli/bench/onnx-writer';
import type { NetworkOpener } from '../../web/core/model/runner';
import { checkSignature, type ModelSignature } from '../../web/core/model/signature';
import { validateModelInfo } from '../../web/core/model/description';
import { identityModel, openNetworkNode } from '../helpers/networks';

function description(size?: number): Record<string, unknown> {
  const input: Record<string, unknown> = { name: 'image', quantity: 'mu', from: { method: 'fbp' } };
  if (size !== undefined) Object.assign(input, { size, pixel: 1 });
  return { format: 'rimfill-model/1', input, output: { name: 'prior', quantity: 'mu' } };
}

/** An opener that records how many sessions it opened and how many were closed. */
function countingOpener(): { open: NetworkOpener; opened: number; closed: number } {
  const c = { opened: 0, closed: 0, open: undefined as unknown as NetworkOpener };
  c.open = async (bytes) => {
    const r = await openNetworkNode(bytes);
    c.opened++;
    const dispose = r.dispose.bind(r);
    r.dispose = async () => {
      c.closed++;
      await dispose();
    };
    return r;
  };
  return c;
}

function twoInputModel(): Uint8Array {
  return writeOnnxModel({
    inputs: [{ name: 'image', dims: [1, 1, 64, 64] }, { name: 'mask', dims: [1, 1, 64, 64] }],
    outputs: [{ name: 'prior', dims: [1, 1, 64, 64] }],
    nodes: [{ op: 'Add', inputs: ['image', 'mask'], outputs: ['prior'] }],
  });
}

function doubleModel(): Uint8Array {
  const dims: OnnxDim[] = [1, 1, 64, 64];
  return writeOnnxModel({
    inputs: [{ name: 'image', dims, elemType: OnnxType.double }],
    outputs: [{ name: 'prior', dims, elemType: OnnxType.double }],
    nodes: [{ op: 'Identity', inputs: ['image'], outputs: ['prior'] }],
  });
}

describe('model import', () => {
  it.each<[string, Uint8Array, number | undefined]>([
    ['a fixed-size model whose size matches the description', identityModel([1, 1, 64, 64]), 64],
    ['a model of any size, used on the reconstruction grid', identityModel([1, 1, 'H', 'W']), undefined],
    ['a model with a symbolic batch axis', identityModel(['batch', 1, 64, 64]), 64],
  ])('accepts %s', async (_, bytes, size) => {
    const c = countingOpener();
    const m = await importModel(bytes, description(size), c.open);
    expect(m.info.input.name).toBe('image');
    expect(m.warnings).toEqual([]);
    expect(c.opened).toBe(1);
    await m.runner.dispose();
  });

  it('warns when the model declares no shape (checked when it runs)', async () => {
    const undeclared = writeOnnxModel({ inputs: [{ name: 'image' }], outputs: [{ name: 'prior' }], nodes: [{ op: 'Identity', inputs: ['image'], outputs: ['prior'] }] });
    const m = await importModel(undeclared, description(64), openNetworkNode);
    expect(m.warnings.join(' ')).toMatch(/declares no shape/);
    await m.runner.dispose();
  });

  it.each<[string, Uint8Array, Record<string, unknown>, RegExp]>([
    ['size differs from the description', identityModel([1, 1, 64, 64]), description(128), /model input "image": shape \[1, 1, 64, 64\] has H \(rows\) = 64, but the description's input.size is 128/],
    ['a fixed size with "the reconstruction grid"', identityModel([1, 1, 64, 64]), description(), /fixes its image size .* add "size": 64 to the description/],
    ['three channels', identityModel([1, 3, 64, 64]), description(64), /has C \(channels\) = 3, expected 1/],
    ['a batch of 4', identityModel([4, 1, 64, 64]), description(64), /has N \(batch\) = 4, expected 1/],
    ['rank 3', identityModel([1, 64, 64]), description(64), /has rank 3, expected rank 4 \(NCHW, N = C = 1\)/],
    ['float64 tensors', doubleModel(), description(64), /element type float64, expected float32/],
    ['two inputs', twoInputModel(), description(64), /the model has 2 inputs \("image", "mask"\), expected exactly one image input/],
    ['an input name the model does not have', identityModel([1, 1, 64, 64], 'x', 'prior'), description(64), /model input: the description names "image", but the model's inputs are "x"/],
    ['an output name the model does not have', identityModel([1, 1, 64, 64], 'image', 'y'), description(64), /model output: the description names "prior", but the model's outputs are "y"/],
  ])('refuses a model with %s, and closes it', async (_, bytes, desc, message) => {
    const c = countingOpener();
    const err = await importModel(bytes, desc, c.open).catch((e) => e);
    expect(err).toBeInstanceOf(InputError);
    expect(err.message).toMatch(message);
    expect(c.opened).toBe(1);
    expect(c.closed).toBe(1);
  });

  it('refuses a bad description before opening the model', async () => {
    const c = countingOpener();
    await expect(importModel(identityModel(), { format: 'rimfill-model/1' }, c.open)).rejects.toThrow(/model description input: got undefined/);
    expect(c.opened).toBe(0);
  });

  it('refuses a file that is not ONNX', async () => {
    const err = await importModel(new TextEncoder().encode('{"not": "a model"}'), description(64), openNetworkNode).catch((e) => e);
    expect(err).toBeInstanceOf(InputError);
    expect(err.message).toMatch(/^model file: not an ONNX model/);
  });

  it('signature check without a runtime: non-tensor outputs are refused', () => {
    const sig: ModelSignature = {
      inputs: [{ name: 'image', isTensor: true, type: 'float32', shape: [1, 1, 'h', 'w'] }],
      outputs: [{ name: 'prior', isTensor: false, shape: [] }],
    };
    expect(() => checkSignature(validateModelInfo(description()), sig)).toThrow(/model output "prior": not a tensor/);
  });
});
