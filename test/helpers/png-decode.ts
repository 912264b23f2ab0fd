// A small PNG decoder for 8-bit greyscale images, written for the tests from the PNG
// specification (W3C Recommendation 2003 / ISO/IEC 15948: chunk layout and CRC-32 in sections
// 5.3-5.4, filter types in section 9.2), independent of Rimfill's writer; inflate is Node's zlib.
import { inflateSync } from 'node:zlib';

const SIGNATURE = [0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a];

const CRC_TABLE = Array.from({ length: 256 }, (_, n) => {
  let c = n;
  for (let k = 0; k < 8; k++) c = c & 1 ? 0xedb88320 ^ (c >>> 1) : c >>> 1;
  return c >>> 0;
});

function crc32(bytes: Uint8Array): number {
  let c = 0xffffffff;
  for (const b of bytes) c = CRC_TABLE[(c ^ b) & 0xff] ^ (c >>> 8);
  return (c ^ 0xffffffff) >>> 0;
}

/** Paeth predictor (PNG specification section 9.4). */
function paeth(a: number, b: number, c: number): number {
  const p = a + b - c, pa = Math.abs(p - a), pb = Math.abs(p - b), pc = Math.abs(p - c);
  return pa <= pb && pa <= pc ? a : pb <= pc ? b : c;
}

/** Decodes an 8-bit greyscale, non-interlaced PNG into rows top to bottom; throws on anything else or a bad CRC. */
export function decodeGreyPng(png: Uint8Array): { width: number; height: number; pixels: Uint8Array } {
  if (!SIGNATURE.every((b, i) => png[i] === b)) throw new Error('not a PNG signature');
  const view = new DataView(png.buffer, png.byteOffset, png.byteLength);
  let pos = 8, width = 0, height = 0;
  const idat: Uint8Array[] = [];
  for (;;) {
    const length = view.getUint32(pos);
    const typeAndData = png.subarray(pos + 4, pos + 8 + length);
    const type = String.fromCharCode(...typeAndData.subarray(0, 4));
    if (crc32(typeAndData) !== view.getUint32(pos + 8 + length)) throw new Error(`bad CRC in chunk ${type}`);
    const data = typeAndData.subarray(4);
    if (type === 'IHDR') {
      width = view.getUint32(pos + 8);
      height = view.getUint32(pos + 12);
      const [depth, colour, , , interlace] = data.subarray(8, 13);
      if (depth !== 8 || colour !== 0 || interlace !== 0) throw new Error(`IHDR: depth ${depth}, colour type ${colour}, interlace ${interlace}`);
    } else if (type === 'IDAT') {
      idat.push(data);
    } else if (type === 'IEND') {
      break;
    }
    pos += 12 + length;
  }
  const raw = inflateSync(Buffer.concat(idat));
  const pixels = new Uint8Array(width * height);
  for (let y = 0; y < height; y++) {
    const filter = raw[y * (width + 1)];
    for (let x = 0; x < width; x++) {
      const v = raw[y * (width + 1) + 1 + x];
      const a = x ? pixels[y * width + x - 1] : 0, b = y ? pixels[(y - 1) * width + x] : 0, c = x && y ? pixels[(y - 1) * width + x - 1] : 0;
      const pred = [0, a, b, (a + b) >> 1, paeth(a, b, c)][filter];
      if (pred === undefined) throw new Error(`row ${y}: filter type ${filter}`);
      pixels[y * width + x] = (v + pred) & 0xff;
    }
  }
  return { width, height, pixels };
}
