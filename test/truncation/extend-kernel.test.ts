import { describe, expect, it } from 'vitest';
import { EXTEND_CODES, EXTEND_PARAMS } from '../../web/core/truncation/extend-methods';
import { runExtension } from '../../web/core/truncation/extend-scan';
import type { DetectorExtension } from '../../web/core/truncation/extension-plan';
import { createMemory } from '../../web/core/engine/instance';
import { engineModule, localWorkspace } from '../helpers/engine';

const nCh = 21, left = 9, right = 14, nViews = 5;
const cos2 = (x: number) => Math.cos((Math.PI / 2) * Math.min(1, Math.max(0, x))) ** 2;

/** Slow, obvious reference of each tail (the formulas of assembly/extend.ts's header). */
function reference(method: keyof typeof EXTEND_CODES, row: Float32Array, p: Float32Array, coord: Float32Array, j: number): number {
  const side = j < left ? 0 : 1;
  const edge = side === 0 ? left : left + nCh - 1;
  const delta = Math.abs(coord[j] - coord[edge]);
  const [p0, p1, p2, p3] = p.subarray(4 * side, 4 * side + 4);
  const m = Math.abs(j - edge); // mirror distance in channels
  const mirroredIndex = side === 0 ? Math.min(nCh - 1, m) : Math.max(0, nCh - 1 - m);
  switch (method) {
    case 'edge': return p1 > 0 ? p0 * cos2((delta - p2) / (p1 - p2)) : 0;
    case 'cosine': return p1 > 0 ? p0 * cos2(delta / p1) : 0;
    case 'mirror': return p1 > 0 ? row[mirroredIndex] * cos2(delta / p1) : 0;
    case 'water': { const q = p2 + delta * p3; return p0 * Math.sqrt(Math.max(0, p1 * p1 - q * q)); }
    default: return 0;
  }
}

async function run(ext: DetectorExtension, sino: Float32Array, parts: number): Promise<Float32Array> {
  const ws = await localWorkspace(parts);
  const measured = ws.alloc('m', sino.length);
  const out = ws.alloc('o', nViews * (left + nCh + right));
  await ws.write(measured, sino);
  await runExtension(ws, ext, measured, out, nViews, nCh);
  return ws.read(out);
}

describe('extendViews kernel', () => {
  it('exports the method codes and table stride the host uses', async () => {
    const inst = await WebAssembly.instantiate(engineModule(), { env: { memory: createMemory(false), abort: () => {} } });
    const ex = inst.exports as Record<string, WebAssembly.Global>;
    expect(ex.EXTEND_PARAMS.value).toBe(EXTEND_PARAMS);
    for (const [name, code] of Object.entries(EXTEND_CODES)) expect(ex[`EXTEND_${name === 'none' ? 'ZERO' : name.toUpperCase()}`].value).toBe(code);
  });

  // A fan-like, slightly non-uniform s coordinate (channel spacing shrinking outwards).
  const coord = Float32Array.from({ length: left + nCh + right }, (_, j) => 300 * Math.sin((j - left - 10) * 0.004));
  const sino = Float32Array.from({ length: nViews * nCh }, (_, i) => 2 + Math.sin(i * 0.37) + (i % nCh) * 0.05);
  const params = (method: keyof typeof EXTEND_CODES) => Float32Array.from({ length: nViews * EXTEND_PARAMS }, (_, i) => {
    const v = Math.floor(i / EXTEND_PARAMS), k = i % 4;
    if (method === 'water') return [0.04, 60 + v, 50 - 3 * v, 1 / (0.8 + 0.1 * v)][k];
    if (method === 'edge') return [2.5 + 0.1 * v, 8 + v, 3, 0][k];
    return [2.5 + 0.1 * v, 6 + 2 * v, 0, 0][k];
  });

  it.each(['edge', 'mirror', 'water', 'cosine'] as const)('%s: matches the reference formulas, copies the measured channels, split-invariant', async (method) => {
    const ext: DetectorExtension = { left, right, code: EXTEND_CODES[method], params: params(method), coord };
    const out = await run(ext, sino, 1);
    const split = await run(ext, sino, 2);
    expect(Array.from(split)).toEqual(Array.from(out));
    const nExt = left + nCh + right;
    let tails = 0;
    for (let v = 0; v < nViews; v++) {
      const row = sino.subarray(v * nCh, (v + 1) * nCh);
      const p = ext.params.subarray(v * EXTEND_PARAMS, (v + 1) * EXTEND_PARAMS);
      for (let j = 0; j < nExt; j++) {
        const got = out[v * nExt + j];
        if (j >= left && j < left + nCh) {
          expect(got).toBe(row[j - left]);
          continue;
        }
        const want = reference(method, row, p, coord, j);
        expect(Math.abs(got - want), `view ${v} channel ${j}`).toBeLessThan(1e-5 * Math.max(1, Math.abs(want)));
        if (want > 0) tails++;
      }
    }
    expect(tails).toBeGreaterThan(nViews * 6);
  });

  it('writes zeros for the zero method and for sides without a tail', async () => {
    const ext: DetectorExtension = { left, right, code: EXTEND_CODES.none, params: params('edge'), coord };
    const out = await run(ext, sino, 1);
    for (let v = 0; v < nViews; v++) {
      for (let j = 0; j < left; j++) expect(out[v * (left + nCh + right) + j]).toBe(0);
    }
    const noTail: DetectorExtension = { left, right, code: EXTEND_CODES.mirror, params: new Float32Array(nViews * EXTEND_PARAMS), coord };
    const out2 = await run(noTail, sino, 1);
    expect(out2.filter((_, i) => i % (left + nCh + right) < left).every((x) => x === 0)).toBe(true);
  });
});
