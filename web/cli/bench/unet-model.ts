// A U-Net-shaped test network for the benchmark (about 1.9 million weights): three 2x2 max-pool
// levels with two 3x3 convolutions + ReLU each (32, 64, 128 channels), a 256-channel bottleneck,
// 2x2 stride-2 transposed convolutions up, skip connections by concatenation, a 1x1 head and
// a residual connection to the input (after Ronneberger, Fischer & Brox 2015, "U-Net",
// doi:10.1007/978-3-319-24574-4_28, at a smaller width). Weights are seeded random (He
// initialization): the benchmark times the arithmetic, not a trained model.
import { writeOnnxModel, type OnnxInitializer, type OnnxNode } from './onnx-writer';
import { seededRandom } from '../../core/simulate/noise';

export interface UnetModel {
  bytes: Uint8Array;
  weights: number;
  /** Multiply-adds for one 256 x 256 image. */
  macs256: number;
}

export function buildUnet(seed = 1): UnetModel {
  const rnd = seededRandom(seed);
  // Box-Muller normal samples.
  const normal = () => Math.sqrt(-2 * Math.log(1 - rnd())) * Math.cos(2 * Math.PI * rnd());
  const nodes: OnnxNode[] = [];
  const inits: OnnxInitializer[] = [];
  let weights = 0, macs = 0, id = 0;

  const param = (dims: number[], std: number): string => {
    const name = `w${id++}`;
    const n = dims.reduce((a, b) => a * b, 1);
    inits.push({ name, dims, data: Float32Array.from({ length: n }, () => std * normal()) });
    weights += n;
    return name;
  };
  const conv = (x: string, cin: number, cout: number, k: number, size: number, relu = true): string => {
    const w = param([cout, cin, k, k], Math.sqrt(2 / (cin * k * k)));
    const b = param([cout], 0);
    const y = `t${id++}`;
    const pad = (k - 1) / 2;
    nodes.push({ op: 'Conv', inputs: [x, w, b], outputs: [y], attributes: { kernel_shape: { ints: [k, k] }, pads: { ints: [pad, pad, pad, pad] } } });
    macs += cin * cout * k * k * size * size;
    if (!relu) return y;
    nodes.push({ op: 'Relu', inputs: [y], outputs: [`${y}r`] });
    return `${y}r`;
  };
  const block = (x: string, cin: number, cout: number, size: number) => conv(conv(x, cin, cout, 3, size), cout, cout, 3, size);
  const pool = (x: string): string => {
    nodes.push({ op: 'MaxPool', inputs: [x], outputs: [`${x}p`], attributes: { kernel_shape: { ints: [2, 2] }, strides: { ints: [2, 2] } } });
    return `${x}p`;
  };
  const up = (x: string, cin: number, cout: number, size: number): string => {
    const w = param([cin, cout, 2, 2], Math.sqrt(2 / cin));
    const b = param([cout], 0);
    nodes.push({ op: 'ConvTranspose', inputs: [x, w, b], outputs: [`${x}u`], attributes: { kernel_shape: { ints: [2, 2] }, strides: { ints: [2, 2] } } });
    macs += cin * cout * 4 * size * size;
    return `${x}u`;
  };
  const concat = (a: string, b: string): string => {
    nodes.push({ op: 'Concat', inputs: [a, b], outputs: [`${a}c`], attributes: { axis: { int: 1 } } });
    return `${a}c`;
  };

  const s = 256;
  const e1 = block('image', 1, 32, s);
  const e2 = block(pool(e1), 32, 64, s / 2);
  const e3 = block(pool(e2), 64, 128, s / 4);
  const bottom = block(pool(e3), 128, 256, s / 8);
  const d3 = block(concat(up(bottom, 256, 128, s / 4), e3), 256, 128, s / 4);
  const d2 = block(concat(up(d3, 128, 64, s / 2), e2), 128, 64, s / 2);
  const d1 = block(concat(up(d2, 64, 32, s), e1), 64, 32, s);
  const head = conv(d1, 32, 1, 1, s, false);
  nodes.push({ op: 'Add', inputs: ['image', head], outputs: ['prior'] });
  const dims = [1, 1, 'H', 'W'];
  const bytes = writeOnnxModel({ inputs: [{ name: 'image', dims }], outputs: [{ name: 'prior', dims }], nodes, initializers: inits });
  return { bytes, weights, macs256: macs };
}
