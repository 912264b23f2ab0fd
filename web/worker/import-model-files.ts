// Reading a dropped or picked network into a checked model: the ONNX file and its
// rimfill-model/1 description (a .json file), checked with importModel (description, then the
// runtime's reading of the model against it). Nothing here stores; the caller stores only
// what this returns.
import { InputError } from '../core/errors';
import type { ModelInfo } from '../core/model/description';
import { importModel, parseModelInfoText } from '../core/model/import-model';
import { MAX_MODEL_BYTES } from '../core/model/ort-runtime';
import type { NetworkOpener } from '../core/model/runner';
import type { ModelSignature } from '../core/model/signature';
import type { InputFile } from './import-scan';

/** Largest description file read (they are a few hundred bytes). */
const MAX_DESCRIPTION_BYTES = 1 << 20;

export interface CheckedModel {
  name: string;
  info: ModelInfo;
  signature: ModelSignature;
  warnings: string[];
  onnx: Uint8Array;
  description: string;
  fileNames: { model: string; description: string };
}

const isJson = (f: InputFile & { size?: number }) => /\.json$/i.test(f.name);

/** Splits the files into the model and its description; InputError when they are not one of each. */
function pair(files: Array<InputFile & { size?: number }>): { model: InputFile & { size?: number }; description: InputFile & { size?: number } } {
  const wanted = 'expected two files: the network (.onnx) and its description (.json, format rimfill-model/1)';
  const json = files.filter(isJson);
  const other = files.filter((f) => !isJson(f));
  if (files.length !== 2 || json.length !== 1) {
    throw new InputError(`network import: got ${files.length} file${files.length === 1 ? '' : 's'} (${files.map((f) => f.name).join(', ') || 'none'}), ${wanted}`);
  }
  return { model: other[0], description: json[0] };
}

/**
 * Reads and checks a network. `open` loads ONNX bytes in the runtime (the page's model worker);
 * the model is closed again before this returns. Throws InputError naming the file and the
 * reason when the model does not fit its description.
 */
export async function checkModelFiles(files: Array<InputFile & { size?: number }>, open: NetworkOpener): Promise<CheckedModel> {
  const { model, description } = pair(files);
  if ((description.size ?? 0) > MAX_DESCRIPTION_BYTES) {
    throw new InputError(`${description.name}: ${description.size} bytes, expected a model description of at most ${MAX_DESCRIPTION_BYTES} bytes`);
  }
  if ((model.size ?? 0) > MAX_MODEL_BYTES) {
    throw new InputError(`${model.name}: ${model.size} bytes is more than the ${MAX_MODEL_BYTES}-byte limit of the in-page runtime`);
  }
  const text = new TextDecoder().decode(await description.arrayBuffer());
  const onnx = new Uint8Array(await model.arrayBuffer());
  let imported: Awaited<ReturnType<typeof importModel>>;
  try {
    imported = await importModel(onnx, parseModelInfoText(text), open);
  } catch (err) {
    if (!(err instanceof InputError)) throw err;
    const file = /^model (file|inputs?|outputs?)\b/.test(err.message) ? model.name : description.name;
    throw err.prefixed(file);
  }
  const { info, runner, warnings } = imported;
  const signature = runner.signature;
  await runner.dispose();
  return {
    name: info.name ?? model.name.replace(/\.onnx$/i, ''),
    info,
    signature,
    warnings,
    onnx,
    description: text,
    fileNames: { model: model.name, description: description.name },
  };
}
