// Test networks built as ONNX models (web/core/model/onnx-writer.ts) and the Node runtime.
import { writeOnnxModel, type OnnxDim } from '../../web/cli/bench/onnx-writer';
export { openNetworkNode } from '../../web/cli/ort-node';

/** output = input. */
export function identityModel(dims: OnnxDim[] = [1, 1, 'H', 'W'], input = 'image', output = 'prior'): Uint8Array {
  return writeOnnxModel({
    inputs: [{ name: input, dims }],
    outputs: [{ name: output, dims }],
    nodes: [{ op: 'Identity', inputs: [input], outputs: [output] }],
  });
}

/** output = input convolved with a 3 x 3 kernel (row-major), zero padding, same size. */
export function smoothingModel(kernel: Float32Array, dims: OnnxDim[] = [1, 1, 'H', 'W']): Uint8Array {
  return writeOnnxModel({
    inputs: [{ name: 'image', dims }],
    outputs: [{ name: 'prior', dims }],
    initializers: [{ name: 'kernel', dims: [1, 1, 3, 3], data: kernel }],
    nodes: [{ op: 'Conv', inputs: ['image', 'kernel'], outputs: ['prior'], attributes: { kernel_shape: { ints: [3, 3] }, pads: { ints: [1, 1, 1, 1] } } }],
  });
}

/** output = input + addend (an n x n image): a network with a deliberately wrong output. */
export function addImageModel(addend: Float32Array, n: number): Uint8Array {
  const dims = [1, 1, n, n];
  return writeOnnxModel({
    inputs: [{ name: 'image', dims }],
    outputs: [{ name: 'prior', dims }],
    initializers: [{ name: 'addend', dims, data: addend }],
    nodes: [{ op: 'Add', inputs: ['image', 'addend'], outputs: ['prior'] }],
  });
}
