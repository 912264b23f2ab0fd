// PNG writer for images shown at a window: 8-bit grey, one IDAT, zlib through the platform
// (PNG specification, W3C 2003 / ISO/IEC 15948: signature, IHDR, IDAT, IEND; CRC-32 of ISO 3309).
import { InputError } from '../errors';
import type { Image2D } from '../image';
import { compress } from './gzip';

let crcTable: Uint32Array | undefined;

/** CRC-32 (polynomial 0xEDB88320), as PNG chunks need (PNG spec, annex D). */
export function crc32(bytes: Uint8Array): number {
  if (!crcTable) {
    crcTable = new Uint32Array(256);
    for (let n = 0; n < 256; n++) {
      let c = n;
      for (let k = 0; k < 8; k++) c = c & 1 ? 0xedb88320 ^ (c >>> 1) : c >>> 1;
      crcTable[n] = c >>> 0;
    }
  }
  let c = 0xffffffff;
  for (let i = 0; i < bytes.length; i++) c = crcTable[(c ^ bytes[i]) & 0xff] ^ (c >>> 8);
  return (c ^ 0xffffffff) >>> 0;
}

function chunk(type: string, data: Uint8Array): Uint8Array {
  const out = new Uint8Array(12 + data.length);
  const v = new DataView(out.buffer);
  v.setUint32(0, data.length);
  for (let i = 0; i < 4; i++) out[4 + i] = type.charCodeAt(i);
  out.set(data, 8);
  v.setUint32(8 + data.length, crc32(out.subarray(4, 8 + data.length)));
  return out;
}

/** A display window: values from level - width/2 to level + width/2 map to black..white. */
export interface DisplayWindow {
  width: number;
  level: number;
}

export function checkWindow(w: DisplayWindow): DisplayWindow {
  if (!(w.width > 0) || !Number.isFinite(w.width)) throw new InputError(`window width: got ${w.width}, expected a positive width`);
  if (!Number.isFinite(w.level)) throw new InputError(`window level: got ${w.level}, expected a finite centre`);
  return w;
}

/**
 * Grey levels 0..255 of an image at a window (linear, REFERENCES.md [window-presets]: lower = L - W/2,
 * upper = L + W/2), rows written top to bottom as j = ny - 1 ... 0 so +y points up on screen.
 * Non-finite pixels are drawn black and counted.
 */
export function windowToGrey(image: Image2D, window: DisplayWindow): { grey: Uint8Array; nonFinite: number } {
  checkWindow(window);
  const { nx, ny } = image.grid;
  const lo = window.level - window.width / 2;
  const scale = 255 / window.width;
  const grey = new Uint8Array(nx * ny);
  let nonFinite = 0;
  for (let j = 0; j < ny; j++) {
    const src = (ny - 1 - j) * nx;
    for (let i = 0; i < nx; i++) {
      const v = image.data[src + i];
      if (!Number.isFinite(v)) {
        nonFinite++;
        continue;
      }
      const g = Math.round((v - lo) * scale);
      grey[j * nx + i] = g < 0 ? 0 : Math.min(g, 255);
    }
  }
  return { grey, nonFinite };
}

/** Encodes 8-bit grey pixels (row after row, top row first) as PNG. */
export async function encodePngGrey(grey: Uint8Array, width: number, height: number): Promise<Uint8Array> {
  if (grey.length !== width * height) throw new Error(`PNG: ${grey.length} pixels for ${width} x ${height}`);
  const ihdr = new Uint8Array(13);
  const v = new DataView(ihdr.buffer);
  v.setUint32(0, width);
  v.setUint32(4, height);
  ihdr.set([8, 0, 0, 0, 0], 8); // 8-bit, greyscale, deflate, adaptive filtering, no interlace
  const raw = new Uint8Array(height * (width + 1)); // filter type 0 (None) before each row
  for (let j = 0; j < height; j++) raw.set(grey.subarray(j * width, (j + 1) * width), j * (width + 1) + 1);
  const idat = await compress(raw, 'deflate');
  const parts = [new Uint8Array([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]), chunk('IHDR', ihdr), chunk('IDAT', idat), chunk('IEND', new Uint8Array(0))];
  const out = new Uint8Array(parts.reduce((n, p) => n + p.length, 0));
  let o = 0;
  for (const p of parts) {
    out.set(p, o);
    o += p.length;
  }
  return out;
}

/** An image as PNG at a window (values as stored: HU windows for HU images), with the number of grey levels used. */
export async function writePng(image: Image2D, window: DisplayWindow): Promise<{ bytes: Uint8Array; nonFinite: number; levels: number }> {
  const { grey, nonFinite } = windowToGrey(image, window);
  const used = new Uint8Array(256);
  for (const g of grey) used[g] = 1;
  return { bytes: await encodePngGrey(grey, image.grid.nx, image.grid.ny), nonFinite, levels: used.reduce((n, u) => n + u, 0) };
}
