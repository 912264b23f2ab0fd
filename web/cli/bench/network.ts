// Benchmark section "network": a U-Net-sized test network (about 2 million weights) on one
// 256 x 256 image, with onnxruntime-web's WebAssembly CPU backend in one thread.
import { seededRandom } from '../../core/simulate/noise';
import { ORT_VERSION } from '../../core/model/ort-runtime';
import { openNetworkNode } from '../ort-node';
import { buildUnet } from './unet-model';

export interface NetworkBench {
  runtime: string;
  weights: number;
  gigaMacs: number;
  /** Loading the model into the runtime (first load also compiles the runtime's wasm), s. */
  loadSeconds: number;
  /** The first run (what one CLI run pays after loading), s. */
  firstRunSeconds: number;
  /** Median of the timed runs, s (after the first, warm-up run). */
  inferenceSeconds: number;
  runs: number;
}

const now = () => performance.now() / 1000;

export async function benchNetwork(repeat: number): Promise<NetworkBench> {
  const model = buildUnet();
  const t0 = now();
  const net = await openNetworkNode(model.bytes);
  const loadSeconds = now() - t0;
  try {
    const rnd = seededRandom(7);
    const input = { data: Float32Array.from({ length: 256 * 256 }, () => rnd()), dims: [1, 1, 256, 256] };
    const times: number[] = [];
    for (let r = 0; r <= repeat; r++) {
      const t = now();
      const out = await net.run('image', 'prior', input);
      if (out.data.length !== 256 * 256) throw new Error(`U-Net output has ${out.data.length} values, expected ${256 * 256}`);
      times.push(now() - t);
    }
    const firstRunSeconds = times.shift()!;
    times.sort((a, b) => a - b);
    return {
      runtime: `onnxruntime-web ${ORT_VERSION}, WebAssembly CPU backend, 1 thread`,
      weights: model.weights,
      gigaMacs: model.macs256 / 1e9,
      loadSeconds,
      firstRunSeconds,
      inferenceSeconds: times[Math.floor(times.length / 2)],
      runs: times.length,
    };
  } finally {
    await net.dispose();
  }
}

export function networkBenchText(b: NetworkBench): string {
  return [
    `network: U-Net-sized test model, ${(b.weights / 1e6).toFixed(2)} M weights, ${b.gigaMacs.toFixed(1)} G multiply-adds per 256x256 image (${b.runtime})`,
    `network inference 256x256 (median of ${b.runs} after the first): ${b.inferenceSeconds.toFixed(2)} s; first run ${b.firstRunSeconds.toFixed(2)} s; model load ${b.loadSeconds.toFixed(2)} s`,
  ].join('\n');
}
