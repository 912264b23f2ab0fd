import { describe, expect, it } from 'vitest';
import { ABI_VERSION } from '../../web/core/engine/abi';
import { instantiateEngine, createMemory } from '../../web/core/engine/instance';
import { KernelKind, VIEW_STRIDE } from '../../web/core/geometry/view-vectors';
import { engineModule } from '../helpers/engine';

// The host's copies of the engine's constants must match the module's (assembly/abi.ts).
describe('engine ABI', () => {
  it('host and module agree on version, geometry kinds and view stride', async () => {
    const e = await instantiateEngine(engineModule(), createMemory(false));
    const g = (e.exports as unknown as Record<string, WebAssembly.Global>);
    expect(e.exports.abiVersion()).toBe(ABI_VERSION);
    expect(g.VIEW_STRIDE.value).toBe(VIEW_STRIDE);
    expect(g.KIND_PARALLEL.value).toBe(KernelKind.parallel);
    expect(g.KIND_FAN_FLAT.value).toBe(KernelKind.fanFlat);
    expect(g.KIND_FAN_CURVED.value).toBe(KernelKind.fanCurved);
  });

  it('the atan polynomial matches Math.atan to 2e-7 on [-1, 1] (Abramowitz & Stegun 4.4.49 bound 2e-8, plus f32 rounding)', async () => {
    const e = await instantiateEngine(engineModule(), createMemory(false));
    let worst = 0;
    for (let z = -1; z <= 1; z += 1 / 512) worst = Math.max(worst, Math.abs(e.exports.atanApprox(z) - Math.atan(z)));
    expect(worst).toBeLessThan(2e-7);
  });
});
