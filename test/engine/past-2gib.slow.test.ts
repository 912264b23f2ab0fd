// Runs whose engine buffers lie past 2 GiB (a 32-bit WebAssembly memory addresses 4 GiB:
// WebAssembly Core Specification 1.0, 2.5.4) give the same volume as when they lie low. Shared
// memory, two workers, as `rimfill reconstruct` runs: every buffer the run lays out is placed
// after a 2 GiB filler (the memory grows to about 2.1 GiB; the kernels touch only the run's part).
import { describe, expect, it } from 'vitest';
import type { Workspace } from '../../web/core/engine/workspace';
import { openWorkspace } from '../../web/cli/engine-node';
import { voxelize } from '../../web/core/phantoms/solid';
import { validateRecipe } from '../../web/core/recipe/recipe';
import { runRecipe } from '../../web/core/recipe/run';
import { ballsCase, project } from '../helpers/cone';
import { localWorkspace } from '../helpers/engine';

const { phantom, grid, geometry: g } = ballsCase;

/** `ws` with a 2 GiB filler laid out first after every reset, so the run's buffers lie past 2^31. */
function highUp(ws: Workspace): Workspace {
  let filled = false;
  return new Proxy(ws, {
    get(target, key, receiver) {
      if (key === 'reset') return () => { target.reset(); filled = false; };
      if (key === 'alloc') {
        return (name: string, n: number) => {
          if (!filled) { filled = true; target.alloc('filler', 2 ** 29 + 2 ** 18); }
          return target.alloc(name, n);
        };
      }
      const v = Reflect.get(target, key, receiver);
      return typeof v === 'function' ? v.bind(target) : v;
    },
  });
}

describe('engine buffers past 2 GiB', () => {
  it('FDK and 3D OS-SART on two workers give the same volumes as with their buffers low', async () => {
    const data = await project(await localWorkspace(), grid, g, voxelize(phantom, grid, 2));
    const scan = { geometry: g, data, muWater: 0.02 };
    const recipeGrid = { grid: { size: 24, pixel: 3 }, volume: { slices: 20, spacing: 3 } };
    for (const recipe of [validateRecipe({ method: 'fbp', ...recipeGrid }), validateRecipe({ method: 'sart', ...recipeGrid, iterations: 2, subsets: 3 })]) {
      const low = await openWorkspace(2);
      const high = await openWorkspace(2);
      try {
        const a = (await runRecipe(low, scan, recipe)).volume!.data;
        const b = (await runRecipe(highUp(high), scan, recipe)).volume!.data;
        expect(a.some((x) => x !== 0), recipe.method).toBe(true);
        expect(Array.from(b), recipe.method).toEqual(Array.from(a));
      } finally {
        low.dispose();
        high.dispose();
      }
    }
  });
});
