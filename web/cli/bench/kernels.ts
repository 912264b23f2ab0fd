// Bench section "kernels": the project's standard problem (512 x 512 image, 720 views over
// 360 degrees, 1024 channels, fan beam, flat detector): forward projection, backprojection and
// full FBP with one and two workers, against a plain TypeScript backprojection.
import { availableParallelism } from 'node:os';
import { validateGeometry } from '../../core/geometry/validate';
import { firstChannelU, viewVectors } from '../../core/geometry/view-vectors';
import { gridOrigin, squareGrid } from '../../core/image';
import { rasterize } from '../../core/phantoms/ellipse';
import { thorax } from '../../core/phantoms/thorax';
import { fbp2d } from '../../core/recon/fbp';
import { Projector2d } from '../../core/recon/projector';
import { openWorkspace } from '../engine-node';
import { median, now, type SectionResult } from './section';
import { backprojectFanFlatTs } from './ts-backproject';

interface Row {
  name: string;
  workers: number;
  seconds: number;
  mupdPerS?: number;
}

export async function benchKernels(repeat: number): Promise<SectionResult> {
  const geometry = validateGeometry({
    kind: 'fan', detector: { shape: 'flat', channels: 1024, rows: 1, pitch: [1.0, 1.0], offset: [0, 0] },
    sourceIsocenter: 600, sourceDetector: 1000, anglesDeg: { start: 0, step: 0.5, count: 720 },
  });
  const grid = squareGrid(512, 0.7);
  const phantom = rasterize(thorax(), grid, 1);
  const updates = 512 * 512 * 720;
  const rows: Row[] = [];
  let sino: Float32Array = new Float32Array(0);

  for (const workers of [1, Math.min(2, availableParallelism())]) {
    if (rows.some((r) => r.workers === workers)) break;
    const ws = await openWorkspace(workers);
    try {
      const fp: number[] = [];
      for (let r = 0; r <= repeat; r++) {
        ws.reset();
        const proj = await Projector2d.create(ws, grid, geometry);
        const img = ws.alloc('img', phantom.length);
        const s = ws.alloc('sino', proj.nViews * proj.nCh);
        await ws.write(img, phantom);
        const t = now();
        await proj.forward(img, s);
        if (r > 0) fp.push(now() - t); // the first run warms up
        sino = await ws.read(s);
      }
      rows.push({ name: 'forward projection (Joseph)', workers, seconds: median(fp), mupdPerS: updates / median(fp) / 1e6 });
      const fbpT: number[] = [], bpT: number[] = [];
      for (let r = 0; r <= repeat; r++) {
        const t = now();
        const res = await fbp2d(ws, { geometry, data: sino }, { grid });
        if (r > 0) {
          fbpT.push(now() - t);
          bpT.push(res.timings.backproject);
        }
      }
      rows.push({ name: 'backprojection (pixel-driven)', workers, seconds: median(bpT), mupdPerS: updates / median(bpT) / 1e6 });
      rows.push({ name: 'FBP (weights + filter + backprojection)', workers, seconds: median(fbpT) });
    } finally {
      ws.dispose();
    }
  }

  // Baseline: the same backprojection in plain TypeScript, one thread.
  const views = viewVectors(geometry);
  const stride = 1024 + 3;
  const filt = new Float32Array(720 * stride).map((_, i) => Math.sin(i * 0.001));
  const { x0, y0 } = gridOrigin(grid);
  const img = new Float32Array(512 * 512);
  const t = now();
  backprojectFanFlatTs(img, 512, 512, grid.dx, grid.dy, x0, y0, views, 720, filt, stride, 1024, firstChannelU(geometry), 1.0);
  const tsSeconds = now() - t;
  rows.push({ name: 'backprojection, plain TypeScript baseline', workers: 1, seconds: tsSeconds, mupdPerS: updates / tsSeconds / 1e6 });

  const bp1 = rows.find((r) => r.name.startsWith('backprojection (') && r.workers === 1)!.seconds;
  const bpN = rows.filter((r) => r.name.startsWith('backprojection (')).at(-1)!.seconds;
  const ratios = { simdVsTypeScript: tsSeconds / bp1, twoWorkerSpeedup: bp1 / bpN };
  return {
    json: { rows, ratios },
    lines: [
      'problem: 512x512 image, 720 views over 360 degrees, 1024 channels, fan beam, flat detector',
      ...rows.map((r) => `${r.name.padEnd(44)} ${String(r.workers).padStart(2)} worker(s)  ${(r.seconds * 1000).toFixed(0).padStart(6)} ms${r.mupdPerS ? `  ${r.mupdPerS.toFixed(0).padStart(5)} M pixel-view updates/s` : ''}`),
      `ratio SIMD Wasm / plain TypeScript backprojection: ${ratios.simdVsTypeScript.toFixed(1)}x`,
      `speed-up 1 -> 2 workers (backprojection): ${ratios.twoWorkerSpeedup.toFixed(2)}x`,
    ],
  };
}
