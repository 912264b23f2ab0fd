// A PNG window is given in HU, as the trade gives windows (soft tissue 400 / 40, common
// practice): it applies to an image in mu through the image's mu_water, is refused with the way
// out when mu_water is unknown, and a window that misses the image is refused instead of
// writing a picture of one grey level. The grey levels are read back from the PNG (PNG
// specification, W3C 2003: IDAT holds zlib data, one filter byte before each row).
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { inflateSync } from 'node:zlib';
import { afterAll, afterEach, describe, expect, it, vi } from 'vitest';
import { exportCommand } from '../../web/cli/commands/export';
import { main } from '../../web/cli/main';
import { writeImageNrrd } from '../../web/core/formats/image-nrrd';
import { squareGrid, type Image2D } from '../../web/core/image';

const dir = mkdtempSync(join(tmpdir(), 'rimfill-window-'));
const f = (name: string) => join(dir, name);
afterAll(() => rmSync(dir, { recursive: true, force: true }));
afterEach(() => vi.restoreAllMocks());

const MU_WATER = 0.0192;
const N = 32;

/** A water disk (radius 10 pixels) in air, in mu (1/mm). */
function waterDisk(muWater?: number): Image2D {
  const data = new Float32Array(N * N);
  for (let j = 0; j < N; j++) for (let i = 0; i < N; i++) if (Math.hypot(i - 15.5, j - 15.5) < 10) data[j * N + i] = MU_WATER;
  return { grid: squareGrid(N, 1), data, quantity: 'mu', muWater };
}

/** Grey levels of an 8-bit greyscale PNG without interlace, filter type 0 on every row (as Rimfill writes them). */
function pngGrey(bytes: Uint8Array): Uint8Array {
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  let at = 8, width = 0;
  const idat: Uint8Array[] = [];
  while (at < bytes.length) {
    const length = view.getUint32(at);
    const type = String.fromCharCode(...bytes.subarray(at + 4, at + 8));
    if (type === 'IHDR') width = view.getUint32(at + 8);
    if (type === 'IDAT') idat.push(bytes.subarray(at + 8, at + 8 + length));
    at += 12 + length;
  }
  const raw = inflateSync(Buffer.concat(idat));
  const rows = raw.length / (width + 1);
  const grey = new Uint8Array(rows * width);
  for (let r = 0; r < rows; r++) grey.set(raw.subarray(r * (width + 1) + 1, (r + 1) * (width + 1)), r * width);
  return grey;
}

async function writeImage(name: string, image: Image2D): Promise<string> {
  writeFileSync(f(name), await writeImageNrrd(image));
  return f(name);
}

async function cli(...argv: string[]): Promise<{ code: number; err: string }> {
  let err = '';
  vi.spyOn(process.stdout, 'write').mockImplementation(() => true);
  vi.spyOn(process.stderr, 'write').mockImplementation((s) => {
    err += String(s);
    return true;
  });
  const code = await main(argv);
  vi.restoreAllMocks();
  return { code, err };
}

describe('export --to x.png --window W --level L', () => {
  it('a soft-tissue window in HU shows a mu image: water mid-grey, air black', async () => {
    const path = await writeImage('mu.nrrd', waterDisk(MU_WATER));
    await exportCommand([path, '--to', f('mu.png'), '--window', '400', '--level', '40']);
    const grey = pngGrey(readFileSync(f('mu.png')));
    // Water is 0 HU: (0 - (40 - 200)) * 255 / 400 = 102 (REFERENCES.md [window-presets], linear window); air is -1000 HU: black.
    expect(grey[(N / 2) * N + N / 2]).toBe(102);
    expect(grey[0]).toBe(0);
  });

  it('with --mu the window is in 1/mm', async () => {
    const path = await writeImage('mu-own.nrrd', waterDisk());
    await exportCommand([path, '--to', f('mu-own.png'), '--mu', '--window', '0.04', '--level', '0.02']);
    const grey = pngGrey(readFileSync(f('mu-own.png')));
    expect(grey[(N / 2) * N + N / 2]).toBe(Math.round((MU_WATER - 0) * (255 / 0.04)));
  });

  it('a window in HU on an image with no mu_water is refused, saying how', async () => {
    const path = await writeImage('no-mu-water.nrrd', waterDisk());
    const r = await cli('export', path, '--to', f('never.png'), '--window', '400', '--level', '40');
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/the window is in HU, but the image holds mu \(1\/mm\) and its mu_water is unknown; give --mu-water X, or give the window in 1\/mm with --mu/);
    expect(existsSync(f('never.png'))).toBe(false);
    expect((await cli('export', path, '--to', f('given.png'), '--window', '400', '--level', '40', '--mu-water', String(MU_WATER))).code).toBe(0);
  });

  it('a window that misses the image is refused rather than drawn as one grey; a uniform image is drawn, with a warning', async () => {
    const path = await writeImage('miss.nrrd', waterDisk(MU_WATER));
    const r = await cli('export', path, '--to', f('blank.png'), '--window', '100', '--level', '3000');
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/the window 2950 to 3050 HU misses the image, which holds -1000 to 0 HU/);
    expect(existsSync(f('blank.png'))).toBe(false);
    const flat = await writeImage('flat.nrrd', { ...waterDisk(MU_WATER), data: new Float32Array(N * N).fill(MU_WATER) });
    const ok = await exportCommand([flat, '--to', f('flat.png'), '--window', '400', '--level', '40']);
    expect(ok.warnings).toContain('the image is uniform (0 HU): the picture is one grey level');
  });
});
