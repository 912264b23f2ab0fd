// The data-consistent step after a prior: the prior-guided method (recipe method "prior",
// issue 4) fits the measured channels to the measured data and the channels beyond the
// detector to the prior's projections, starting from the prior. Every caller (the page's
// network-prior job, the CLI) reaches that method through this one function.
import type { Workspace } from '../engine/workspace';
import { InputError } from '../errors';
import type { Image2D, ImageGrid } from '../image';
import { METHODS } from '../recipe/recipe';
import type { RecipeResult } from '../recipe/run';
import type { RunHooks } from '../run-hooks';
import type { Scan } from '../scan';

/** Options of the data-consistent step that the page and the CLI expose. */
export interface DataConsistentOptions {
  /** Reconstruction grid (the prior is resampled onto it). */
  grid: ImageGrid;
  /** Outer iterations; absent: the method's default. */
  iterations?: number;
}

/** Why the step cannot run in this build ('' when it can). */
export function dataConsistentUnavailable(): string {
  return (METHODS as readonly string[]).includes('prior')
    ? ''
    : 'the prior-guided data-consistent method is not part of this build yet';
}

/** Reconstructs `scan` with the prior-guided data-consistent method from `prior` (any grid, mu or HU). */
export async function dataConsistentFromPrior(ws: Workspace, scan: Scan, prior: Image2D, options: DataConsistentOptions, hooks: RunHooks = {}): Promise<RecipeResult> {
  throw new InputError(`data-consistent step: ${dataConsistentUnavailable() || 'not connected to the prior-guided method in this build'}`);
}
