// Importing a user's network: the description is checked first (cheap, clear messages), then
// the runtime loads the ONNX bytes and its signature is checked against the description. Any
// failure throws InputError and leaves nothing open, so a caller that stores only after success
// stores nothing for a model that does not fit.
import { InputError } from '../errors';
import { validateModelInfo, type ModelInfo } from './description';
import { networkInputRecipe } from './network-input';
import type { NetworkOpener, NetworkRunner } from './runner';
import { checkSignature } from './signature';

export interface ImportedModel {
  info: ModelInfo;
  /** The open model; the caller disposes it. */
  runner: NetworkRunner;
  warnings: string[];
}

/** Parses description JSON text (InputError for text that is not JSON). */
export function parseModelInfoText(text: string): unknown {
  try {
    return JSON.parse(text);
  } catch (err) {
    const why = (err as Error).message.replace(/\s+/g, ' ').slice(0, 160);
    throw new InputError(`model description: not valid JSON (${why})`);
  }
}

/**
 * Validates a model: description (parsed JSON), then the ONNX bytes opened with `open`, then
 * the model's inputs and outputs against the description.
 */
export async function importModel(modelBytes: Uint8Array, description: unknown, open: NetworkOpener): Promise<ImportedModel> {
  const info = validateModelInfo(description);
  networkInputRecipe(info);
  const runner = await open(modelBytes);
  try {
    const warnings = checkSignature(info, runner.signature);
    return { info, runner, warnings };
  } catch (err) {
    await runner.dispose();
    throw err;
  }
}
