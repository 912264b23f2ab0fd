// Network import in the page's coordinator (Node runtime, fake-indexeddb): a model is checked
// in the runtime against its description and stored with it in one transaction; a model that
// does not fit is refused with a message naming the file and the reason, and nothing is stored.
import 'fake-indexeddb/auto';
import { createStore, keys as allKeys } from 'idb-keyval';
import { describe, expect, it } from 'vitest';
import { InputError } from '../../web/core/errors';
import { deleteModel, listModels, loadModel } from '../../web/store/models';
import { Coordinator } from '../../web/worker/coordinator';
import { localWorkspace } from '../helpers/engine';
import { identityModel, openNetworkNode } from '../helpers/networks';

let n = 0;
function coordinator() {
  const store = createStore(`models-${n++}`, 'records');
  return { store, c: new Coordinator({ openWorkspace: () => localWorkspace(1), sharedMemory: false, store, openModel: (b) => openNetworkNode(b) }) };
}

const description = (input: Record<string, unknown> = {}) =>
  JSON.stringify({ format: 'rimfill-model/1', name: 'identity test', input: { name: 'image', quantity: 'mu', from: { method: 'fbp', extend: 'water' }, ...input }, output: { name: 'prior', quantity: 'mu' } });

const file = (bytes: Uint8Array | string, name: string) => new File([bytes as BlobPart], name);

async function storedKeys(store: ReturnType<typeof createStore>): Promise<string[]> {
  return (await allKeys(store)).map(String);
}

describe('network import', () => {
  it('stores a model that fits its description, with its bytes, signature and file names', async () => {
    const { c, store } = coordinator();
    const onnx = identityModel();
    const meta = await c.importModel([file(description(), 'net.json'), file(onnx, 'net.onnx')], {});
    expect(meta).toMatchObject({ kind: 'model', name: 'identity test', bytes: onnx.length, fileNames: { model: 'net.onnx', description: 'net.json' } });
    expect(meta.info.input.from).toEqual({ method: 'fbp', extend: 'water' });
    expect(meta.signature.inputs[0]).toEqual({ name: 'image', isTensor: true, type: 'float32', shape: [1, 1, 'H', 'W'] });
    expect((await listModels(store)).map((m) => m.id)).toEqual([meta.id]);
    const back = await loadModel(meta.id, store);
    expect(Buffer.from(back.onnx).equals(Buffer.from(onnx))).toBe(true);
    await deleteModel(meta.id, store);
    expect(await storedKeys(store)).toEqual([]);
  });

  it.each<[string, () => File[], RegExp]>([
    ['a file that is not ONNX', () => [file('not a network', 'net.onnx'), file(description(), 'net.json')], /^net\.onnx: model file: not an ONNX model/],
    ['a model whose fixed size differs from the description', () => [file(identityModel([1, 1, 128, 128]), 'fixed.onnx'), file(description({ size: 256 }), 'fixed.json')],
      /^fixed\.onnx: model input "image": shape \[1, 1, 128, 128\] has H \(rows\) = 128, but the description's input\.size is 256/],
    ['a description naming an output the model lacks', () => [file(identityModel(), 'net.onnx'), file(description().replace('"prior"', '"restored"'), 'net.json')],
      /^net\.onnx: model output: the description names "restored", but the model's outputs are "prior"/],
    ['a description that is not JSON', () => [file(identityModel(), 'net.onnx'), file('{"format": ', 'net.json')], /^net\.json: model description: not valid JSON/],
    ['a description of another format', () => [file(identityModel(), 'net.onnx'), file(description().replace('rimfill-model/1', 'other/2'), 'net.json')],
      /^net\.json: model description format: got "other\/2", expected "rimfill-model\/1"/],
    ['one file only', () => [file(identityModel(), 'net.onnx')], /^network import: got 1 file \(net\.onnx\), expected two files: the network \(\.onnx\) and its description/],
    ['two descriptions', () => [file(description(), 'a.json'), file(description(), 'b.json')], /^network import: got 2 files \(a\.json, b\.json\), expected two files/],
  ])('refuses %s with the reason and stores nothing', async (_, files, message) => {
    const { c, store } = coordinator();
    const err = await c.importModel(files(), {}).catch((e) => e);
    expect(err).toBeInstanceOf(InputError);
    expect(err.message).toMatch(message);
    expect(await storedKeys(store)).toEqual([]);
  });
});
