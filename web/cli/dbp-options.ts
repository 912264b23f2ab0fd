// The options of `rimfill reconstruct --method dbp`: help, which other options it refuses, and
// the undetermined mask it can write beside the image.
import { InputError } from '../core/errors';
import type { OptionType, ParsedArgs } from './args';

export const DBP_OPTIONS: Record<string, OptionType> = { undetermined: 'string' };

export const DBP_HELP = `    dbp: [--undetermined mask.nrrd]
  Differentiated backprojection and finite Hilbert inversion on chords through a known region
  (Noo, Clackdoyle & Pack 2004): reconstructs only the measured field of view, exactly in
  principle from the truncated data plus what is known. A truncated scan needs a region of known
  value inside the field of view; an outline then bounds the object along each chord. Pixels
  that are not determined (outside the field of view, or on chords that miss every known
  region) are set to 0 (air) and listed in the report; --undetermined writes them as a mask
  (1 = not determined) on the image's grid.`;

/** Refuses options that do not apply: FBP's filter and extension for dbp, --undetermined for other methods. */
export function checkDbpOptions(a: ParsedArgs, method: string): void {
  const o = a.options;
  if (method === 'dbp') {
    for (const name of ['extend', 'filter', 'band-limit']) {
      if (o[name] !== undefined) throw new InputError(`option --${name}: not for --method dbp (it differentiates the data and needs neither a ramp filter nor a detector extension)`);
    }
  } else if (o.undetermined !== undefined) {
    throw new InputError(`option --undetermined: only for --method dbp, not --method ${method}`);
  }
}
