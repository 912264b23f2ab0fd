// TIFF frames as lab and C-arm systems write them, read like uncompressed ones. The files
// (test/fixtures/tiff, scripts/reference/tiff_frames.py) were laid out by tifffile, their LZW and
// PackBits pieces encoded by libtiff (through Pillow); the generator recomputes the frames from
// v(k, j, i) = (4099 k + 977 j + 131 i + (i j mod 17)) mod 65536 and checks them with libtiff and
// tifffile before it writes them. Here every file must give those values exactly.
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { InputError } from '../../web/core/errors';
import { readTiffStack } from '../../web/core/formats/tiff';
import { lzwDecode, packBitsDecode } from '../../web/core/formats/tiff-codecs';
import { readTiffStructure } from '../../web/core/formats/tiff-structure';

const fixture = (name: string) => new Uint8Array(readFileSync(new URL(`../fixtures/tiff/${name}`, import.meta.url)));
const stack = (name: string) => readTiffStack([{ name, bytes: fixture(name) }]);

/** The frames the generator wrote: 3 x 20 x 24, as uint16, or as float32 v / 7 - 100. */
function expected(float = false): Float32Array {
  const out = new Float32Array(3 * 20 * 24);
  for (let k = 0; k < 3; k++) {
    for (let j = 0; j < 20; j++) {
      for (let i = 0; i < 24; i++) {
        const v = (4099 * k + 977 * j + 131 * i + ((i * j) % 17)) % 65536;
        out[(k * 20 + j) * 24 + i] = float ? Math.fround(v / 7 - 100) : v;
      }
    }
  }
  return out;
}

describe('TIFF frames by an independent writer', () => {
  it.each([
    ['stack-plain.tif', 'uncompressed strips', false],
    ['stack-lzw.tif', 'LZW strips', false],
    ['stack-lzw-predictor-be.tif', 'LZW with horizontal differencing, big-endian', false],
    ['stack-packbits.tif', 'PackBits strips', false],
    ['stack-tiled-plain.tif', 'uncompressed 16 x 16 tiles (cut at the edges)', false],
    ['stack-tiled-lzw.tif', 'LZW tiles', false],
    ['stack-bigtiff.tif', 'BigTIFF, uncompressed', true],
    ['stack-bigtiff-deflate.tif', 'BigTIFF, deflate with horizontal differencing', true],
    ['stack-bigtiff-packbits-be.tif', 'BigTIFF, PackBits, big-endian', true],
    ['stack-bigtiff-tiled-lzw-predictor.tif', 'BigTIFF, LZW tiles with horizontal differencing', true],
  ])('%s (%s) gives the frames', async (name, _, big) => {
    expect(readTiffStructure(fixture(name)).big).toBe(big);
    const s = await stack(name);
    expect([s.frames, s.height, s.width]).toEqual([3, 20, 24]);
    expect(s.data).toEqual(expected());
  });

  it('float32 frames in LZW strips', async () => {
    expect((await stack('float-lzw.tif')).data).toEqual(expected(true));
  });

  it('a long LZW stream (12-bit codes and a Clear code) gives the uncompressed frame', async () => {
    const plain = await stack('large-plain.tif');
    const lzw = await stack('large-lzw.tif');
    expect([lzw.width, lzw.height]).toEqual([128, 96]);
    expect(lzw.data).toEqual(plain.data);
  });
});

describe('damaged compressed pieces end in InputError, never a hang or an overrun', () => {
  // A tiny LZW stream by hand (TIFF 6.0 section 13): Clear, "A", "B", code 258 ("AB"), end,
  // as 9-bit codes, most significant bit first.
  const codes = (list: number[], width = 9) => {
    const bits = list.map((c) => c.toString(2).padStart(width, '0')).join('');
    return Uint8Array.from({ length: Math.ceil(bits.length / 8) }, (_, k) => parseInt(bits.slice(8 * k, 8 * k + 8).padEnd(8, '0'), 2));
  };

  it('decodes a hand-made stream and refuses it damaged', () => {
    expect(Array.from(lzwDecode(codes([256, 65, 66, 258, 257]), 4, 'piece'))).toEqual([65, 66, 65, 66]);
    // A code not yet in the table (the next free one): the previous string plus its first byte.
    expect(Array.from(lzwDecode(codes([256, 65, 258, 257]), 3, 'piece'))).toEqual([65, 65, 65]);
    expect(() => lzwDecode(codes([256, 65, 66, 300, 257]), 4, 'piece')).toThrow(/LZW code 300 beyond the table/);
    expect(() => lzwDecode(codes([256, 65, 257]), 4, 'piece')).toThrow(/decode to 1 bytes, 4 expected/);
    expect(() => lzwDecode(codes([256, 400]), 4, 'piece')).toThrow(/LZW code 400 where a byte was expected/);
    expect(() => lzwDecode(Uint8Array.of(0, 1, 2, 3), 4, 'piece')).toThrow(/old-style LZW/);
    // No end code and no data: stops at the end of the input, never loops.
    expect(() => lzwDecode(new Uint8Array(0), 4, 'piece')).toThrow(InputError);
    // More data than the piece holds: the extra is left out, nothing written beyond.
    expect(Array.from(lzwDecode(codes([256, 65, 66, 258, 258, 257]), 3, 'piece'))).toEqual([65, 66, 65]);
  });

  it('PackBits runs that overrun the input are refused', () => {
    expect(Array.from(packBitsDecode(new Uint8Array(Int8Array.of(2, 1, 2, 3, -2, 9, -128).buffer), 6, 'piece'))).toEqual([1, 2, 3, 9, 9, 9]);
    expect(() => packBitsDecode(Uint8Array.of(5, 1, 2), 6, 'piece')).toThrow(/run of 6 bytes runs past the end/);
    expect(() => packBitsDecode(Uint8Array.of(0xfe), 3, 'piece')).toThrow(/no byte to repeat/);
    expect(() => packBitsDecode(Uint8Array.of(0, 7), 3, 'piece')).toThrow(/decode to 1 bytes, 3 expected/);
  });

  it('a BigTIFF directory offset past the end of the file', async () => {
    const b = fixture('stack-bigtiff.tif').slice();
    new DataView(b.buffer).setUint32(8, b.length + 100, true);
    await expect(readTiffStack([{ name: 'x.tif', bytes: b }])).rejects.toThrow(/x\.tif: TIFF: a structure at byte \d+ runs past the end of the file/);
  });
});
