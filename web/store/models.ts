// Users' networks in storage: description and ONNX bytes written in one transaction (a model
// that failed its import check is never stored), listed from their small descriptions, deleted.
import { getMany, type UseStore } from 'idb-keyval';
import type { ModelInfo } from '../core/model/description';
import type { ModelSignature } from '../core/model/signature';
import { deleteAll, keysWithPrefix, pageStore, putAll } from './db';
import { checkRecord, keys, SCHEMA_VERSION, type ModelData, type ModelMeta } from './records';
import { checkName, newId } from './scans';

export interface NewModel {
  name: string;
  info: ModelInfo;
  signature: ModelSignature;
  fileNames: ModelMeta['fileNames'];
  warnings: string[];
  onnx: Uint8Array;
  /** The description as the user wrote it. */
  description: string;
}

/** Stores a checked model; returns its description record. */
export async function saveModel(input: NewModel, store: UseStore = pageStore()): Promise<ModelMeta> {
  const id = newId();
  const meta: ModelMeta = {
    schema: SCHEMA_VERSION,
    kind: 'model',
    id,
    name: checkName(input.name),
    createdAt: Date.now(),
    info: input.info,
    signature: input.signature,
    fileNames: input.fileNames,
    bytes: input.onnx.byteLength,
    warnings: input.warnings,
  };
  const data: ModelData = { schema: SCHEMA_VERSION, kind: 'model-data', id, onnx: input.onnx, description: input.description };
  await putAll([[keys.model(id), meta], [keys.modelData(id), data]], store);
  return meta;
}

/** Every stored model, oldest first. */
export async function listModels(store: UseStore = pageStore()): Promise<ModelMeta[]> {
  const ks = await keysWithPrefix('model/', store);
  const values = await getMany(ks, store);
  return values.map((v, i) => checkRecord<ModelMeta>(v, 'model', ks[i])).sort((a, b) => a.createdAt - b.createdAt);
}

/** A stored model ready to open: its description record and ONNX bytes. */
export async function loadModel(id: string, store: UseStore = pageStore()): Promise<{ meta: ModelMeta; onnx: Uint8Array }> {
  const [m, d] = await getMany([keys.model(id), keys.modelData(id)], store);
  const meta = checkRecord<ModelMeta>(m, 'model', keys.model(id));
  const data = checkRecord<ModelData>(d, 'model-data', keys.modelData(id));
  return { meta, onnx: data.onnx };
}

/** Deletes a model (results made with it stay: they record the model's name and description). */
export async function deleteModel(id: string, store: UseStore = pageStore()): Promise<void> {
  await deleteAll([keys.model(id), keys.modelData(id)], store);
}
