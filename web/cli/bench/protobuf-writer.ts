// A minimal Protocol Buffers encoder (wire format: varints, length-delimited fields, packed
// repeated scalars), enough to write ONNX models for tests and the benchmark.
// Wire format: https://protobuf.dev/programming-guides/encoding/ (tag = field << 3 | wire type;
// wire type 0 varint, 2 length-delimited, 5 fixed 32-bit).

const WIRE_VARINT = 0;
const WIRE_LENGTH = 2;
const WIRE_FIXED32 = 5;

/** Builds one message; nested messages are built separately and written with `message`. */
export class ProtoWriter {
  private chunks: Uint8Array[] = [];
  private scratch: number[] = [];
  private size = 0;

  private flushScratch(): void {
    if (this.scratch.length === 0) return;
    this.chunks.push(Uint8Array.from(this.scratch));
    this.size += this.scratch.length;
    this.scratch = [];
  }

  private rawVarint(value: number | bigint): void {
    // Negative int64 values are written as their two's complement in 10 bytes.
    let v = BigInt(value);
    if (v < 0n) v += 1n << 64n;
    do {
      const byte = Number(v & 0x7fn);
      v >>= 7n;
      this.scratch.push(v ? byte | 0x80 : byte);
    } while (v);
  }

  private tag(field: number, wire: number): void {
    this.rawVarint(field * 8 + wire);
  }

  private rawBytes(bytes: Uint8Array): void {
    this.flushScratch();
    this.chunks.push(bytes);
    this.size += bytes.length;
  }

  /** An int32/int64/enum field. */
  int(field: number, value: number | bigint): this {
    this.tag(field, WIRE_VARINT);
    this.rawVarint(value);
    return this;
  }

  /** A float field (fixed 32-bit, little-endian IEEE 754). */
  float(field: number, value: number): this {
    this.tag(field, WIRE_FIXED32);
    this.rawBytes(new Uint8Array(Float32Array.of(value).buffer));
    return this;
  }

  /** A bytes field. */
  bytes(field: number, value: Uint8Array): this {
    this.tag(field, WIRE_LENGTH);
    this.rawVarint(value.length);
    this.rawBytes(value);
    return this;
  }

  /** A string field (UTF-8). */
  string(field: number, value: string): this {
    return this.bytes(field, new TextEncoder().encode(value));
  }

  /** An embedded message field. */
  message(field: number, value: ProtoWriter): this {
    return this.bytes(field, value.finish());
  }

  /** A packed repeated int64 field. */
  packedInts(field: number, values: readonly number[]): this {
    const inner = new ProtoWriter();
    for (const v of values) inner.rawVarint(v);
    return this.bytes(field, inner.finish());
  }

  /** A packed repeated float field (little-endian IEEE 754 single precision). */
  packedFloats(field: number, values: readonly number[] | Float32Array): this {
    const f = Float32Array.from(values);
    return this.bytes(field, new Uint8Array(f.buffer));
  }

  /** The encoded message. */
  finish(): Uint8Array {
    this.flushScratch();
    const out = new Uint8Array(this.size);
    let o = 0;
    for (const c of this.chunks) {
      out.set(c, o);
      o += c.length;
    }
    return out;
  }
}
