// Writes small ONNX models (ModelProto) from a plain description: used by the tests and the
// benchmark to build networks with known behaviour. Field numbers follow onnx/onnx.proto
// (ModelProto, GraphProto, NodeProto, AttributeProto, TensorProto, ValueInfoProto, TypeProto).
import { ProtoWriter } from './protobuf-writer';

/** ONNX TensorProto.DataType codes used here (onnx.proto). */
export const OnnxType = { float: 1, int64: 7, double: 11 } as const;

/** AttributeProto.AttributeType codes (onnx.proto). */
const ATTR = { float: 1, int: 2, string: 3, floats: 6, ints: 7 } as const;

/** A dimension: a fixed size or a symbolic name. */
export type OnnxDim = number | string;

export interface OnnxValueInfo {
  name: string;
  /** Absent: the shape is not declared. */
  dims?: OnnxDim[];
  /** Element type (OnnxType); default float. */
  elemType?: number;
}

export type OnnxAttribute = { int: number } | { ints: number[] } | { float: number } | { floats: number[] } | { string: string };

export interface OnnxNode {
  op: string;
  inputs: string[];
  outputs: string[];
  attributes?: Record<string, OnnxAttribute>;
}

export interface OnnxInitializer {
  name: string;
  dims: number[];
  data: Float32Array;
}

export interface OnnxGraph {
  inputs: OnnxValueInfo[];
  outputs: OnnxValueInfo[];
  nodes: OnnxNode[];
  initializers?: OnnxInitializer[];
  /** Default-domain opset version; default 17. */
  opset?: number;
}

function valueInfo(v: OnnxValueInfo): ProtoWriter {
  const tensorType = new ProtoWriter().int(1, v.elemType ?? OnnxType.float);
  if (v.dims) {
    const shape = new ProtoWriter();
    for (const d of v.dims) shape.message(1, typeof d === 'string' ? new ProtoWriter().string(2, d) : new ProtoWriter().int(1, d));
    tensorType.message(2, shape);
  }
  return new ProtoWriter().string(1, v.name).message(2, new ProtoWriter().message(1, tensorType));
}

function attribute(name: string, a: OnnxAttribute): ProtoWriter {
  const w = new ProtoWriter().string(1, name);
  if ('int' in a) return w.int(20, ATTR.int).int(3, a.int);
  if ('ints' in a) return w.int(20, ATTR.ints).packedInts(8, a.ints);
  if ('float' in a) return w.int(20, ATTR.float).float(2, a.float);
  if ('floats' in a) return w.int(20, ATTR.floats).packedFloats(7, a.floats);
  return w.int(20, ATTR.string).string(4, a.string);
}

function node(n: OnnxNode, index: number): ProtoWriter {
  const w = new ProtoWriter();
  for (const i of n.inputs) w.string(1, i);
  for (const o of n.outputs) w.string(2, o);
  w.string(3, `${n.op.toLowerCase()}_${index}`).string(4, n.op);
  for (const [k, a] of Object.entries(n.attributes ?? {})) w.message(5, attribute(k, a));
  return w;
}

function initializer(t: OnnxInitializer): ProtoWriter {
  const count = t.dims.reduce((a, b) => a * b, 1);
  if (count !== t.data.length) throw new RangeError(`initializer ${t.name}: dims ${t.dims.join('x')} hold ${count} values, data has ${t.data.length}`);
  // raw_data: little-endian IEEE 754 floats (onnx.proto, TensorProto.raw_data).
  const raw = new Uint8Array(t.data.buffer.slice(t.data.byteOffset, t.data.byteOffset + t.data.byteLength));
  return new ProtoWriter().packedInts(1, t.dims).int(2, OnnxType.float).string(8, t.name).bytes(9, raw);
}

/** Encodes a model (IR version 8) holding one graph. */
export function writeOnnxModel(g: OnnxGraph): Uint8Array {
  const graph = new ProtoWriter();
  g.nodes.forEach((n, i) => { graph.message(1, node(n, i)); });
  graph.string(2, 'rimfill_test_graph');
  for (const t of g.initializers ?? []) graph.message(5, initializer(t));
  for (const v of g.inputs) graph.message(11, valueInfo(v));
  for (const v of g.outputs) graph.message(12, valueInfo(v));
  const opset = new ProtoWriter().string(1, '').int(2, g.opset ?? 17);
  return new ProtoWriter().int(1, 8).string(2, 'rimfill').message(7, graph).message(8, opset).finish();
}
