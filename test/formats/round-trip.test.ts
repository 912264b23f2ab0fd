// Round trips: every writer's output read back gives identical arrays and metadata; PNG output
// is decoded by an independent decoder written from the PNG specification (Pillow decodes it
// too in png-pillow.ref.test.ts).
import { describe, expect, it } from 'vitest';
import { validateGeometry } from '../../web/core/geometry/validate';
import { squareGrid, type Image2D } from '../../web/core/image';
import { readImage2D, readImageFile } from '../../web/core/formats/read-image';
import { readScanFile } from '../../web/core/formats/read-scan';
import { writeScanNrrd } from '../../web/core/formats/scan-nrrd';
import { readTiffStack, writeTiffStack } from '../../web/core/formats/tiff';
import { writeImageFile } from '../../web/core/formats/write-image';
import { writeMetaImage } from '../../web/core/formats/metaimage';
import { decodeGreyPng } from '../helpers/png-decode';

const geometry = validateGeometry({
  kind: 'fan', detector: { shape: 'curved', channels: 7, rows: 1, pitch: [1.2, 1], offset: [0.3, 0] },
  sourceIsocenter: 500, sourceDetector: 900, anglesDeg: { start: 5, step: 2, count: 4 },
});

function ramp(n: number, scale = 0.01): Float32Array {
  return Float32Array.from({ length: n }, (_, i) => Math.sin(i * 0.37) * scale + i * 1e-4);
}

function image(): Image2D {
  const grid = { ...squareGrid(6, 0.8), nx: 6, ny: 5, cx: 3.5, cy: -2 };
  return { grid, data: ramp(30, 0.02).map((v) => 0.0192 + v), quantity: 'mu', muWater: 0.0192, fovRadius: 40 };
}

describe('scan round trip', () => {
  for (const compress of [false, true]) {
    it(`NRRD scan, ${compress ? 'gzip' : 'raw'}: identical data, geometry and mu_water`, async () => {
      const scan = { geometry, data: ramp(28), muWater: 0.0201, notes: { phantom: 'water' } };
      const bytes = await writeScanNrrd(scan, compress);
      const back = await readScanFile([{ name: 'scan.nrrd', bytes }]);
      expect(back.scan.data).toEqual(scan.data);
      expect(back.scan.geometry).toEqual(geometry);
      expect(back.scan.muWater).toBe(0.0201);
      expect(back.scan.notes).toEqual({ phantom: 'water' });
    });
  }

  it('calibrated views travel in the header under their own keys', async () => {
    const calibrated = validateGeometry({
      kind: 'cone', detector: { channels: 7, rows: 2, pitch: [1.2, 1] }, sourceIsocenter: 500, sourceDetector: 900,
      views: [0, 1].map((v) => ({ focalSpot: [500, v, 3], detectorCenter: [-400, 2 * v, 2], channelStep: [0, 1.2, 0], rowStep: [0, 0, 1] })),
    });
    const bytes = await writeScanNrrd({ geometry: calibrated, data: ramp(28) });
    expect(new TextDecoder().decode(bytes.subarray(0, 600))).toMatch(/"views":\[\{"focalSpot":\[500,0,3\],"detectorCenter":\[-400,0,2\],"channelStep":\[0,1\.2,0\],"rowStep":\[0,0,1\]\}/);
    const back = await readScanFile([{ name: 'scan.nrrd', bytes }]);
    expect(back.scan.geometry).toEqual(calibrated);
  });
});

describe('image round trips', () => {
  const cases: Array<[string, 'nrrd' | 'mha' | 'mhd', 'mu' | 'hu', 'float32' | 'int16', boolean]> = [
    ['NRRD float32 mu', 'nrrd', 'mu', 'float32', false],
    ['NRRD float32 HU, gzip', 'nrrd', 'hu', 'float32', true],
    ['NRRD int16 HU', 'nrrd', 'hu', 'int16', false],
    ['MetaImage .mha float32 mu', 'mha', 'mu', 'float32', false],
    ['MetaImage .mha int16 HU, zlib', 'mha', 'hu', 'int16', true],
    ['MetaImage .mhd + .raw float32 HU', 'mhd', 'hu', 'float32', false],
  ];
  for (const [label, format, quantity, sampleType, compress] of cases) {
    it(`${label}: same grid and values`, async () => {
      const img = image();
      const written = await writeImageFile(img, 'out', { format, quantity, sampleType, compress });
      const { volume } = await readImageFile(written.files);
      expect(volume.quantity).toBe(quantity);
      expect([volume.nx, volume.ny, volume.nz]).toEqual([6, 5, 1]);
      expect(volume.spacing.slice(0, 2)).toEqual([0.8, 0.8]);
      expect(volume.origin[0]).toBeCloseTo(3.5 - 2.5 * 0.8, 12);
      expect(volume.origin[1]).toBeCloseTo(-2 - 2 * 0.8, 12);
      expect(volume.muWater).toBe(0.0192);
      const expected = quantity === 'mu' ? img.data : img.data.map((m) => (1000 * (m - 0.0192)) / 0.0192);
      const rounded = sampleType === 'int16' ? expected.map((v) => Math.round(v)) : expected;
      expect(volume.data).toEqual(Float32Array.from(rounded));
      const back = await readImage2D(written.files);
      expect(back.image.grid).toEqual(img.grid);
    });
  }

  it('int16 output counts the pixels it clamps', async () => {
    const img: Image2D = { grid: squareGrid(2, 1), data: new Float32Array([0, 40000, -40000, Number.NaN]), quantity: 'hu' };
    const w = await writeImageFile(img, 'x', { format: 'nrrd', sampleType: 'int16' });
    expect(w.clamped).toBe(3);
    const { volume } = await readImageFile(w.files);
    expect(Array.from(volume.data)).toEqual([0, 32767, -32768, 0]);
  });

  it('MetaImage scan with geometry key reads as a scan', async () => {
    const data = ramp(28);
    const files = await writeMetaImage(data, { sizes: [7, 1, 4], spacing: [1, 1, 1], offset: [0, 0, 0], keys: { RimfillGeometry: JSON.stringify(geometry), RimfillQuantity: 'line-integral' } });
    const r = await readScanFile(files);
    expect(r.scan.data).toEqual(data);
    expect(r.scan.geometry).toEqual(geometry);
  });
});

describe('TIFF writer', () => {
  it('a float32 stack reads back frame for frame', async () => {
    const data = ramp(3 * 4 * 5, 100);
    const bytes = writeTiffStack({ width: 4, height: 3, frames: 5, data });
    const s = await readTiffStack([{ name: 'stack.tif', bytes }]);
    expect([s.width, s.height, s.frames]).toEqual([4, 3, 5]);
    expect(s.data).toEqual(data);
  });
});

describe('PNG at a window', () => {
  it('decodes to the grey levels the window rule gives (lower = L - W/2, upper = L + W/2)', async () => {
    // HU values across and beyond a soft-tissue window W 400, L 40 (REFERENCES.md [window-presets]).
    const hu = new Float32Array([-1000, -160, -60, 45, 140, 240, 1000, 39.9]);
    const img: Image2D = { grid: { nx: 4, ny: 2, dx: 1, dy: 1, cx: 0, cy: 0 }, data: hu, quantity: 'hu' };
    const w = await writeImageFile(img, 'win', { format: 'png', window: { width: 400, level: 40 } });
    const png = decodeGreyPng(w.files[0].bytes);
    expect([png.width, png.height]).toEqual([4, 2]);
    // Rows are written top (j = ny - 1) to bottom; grey = round((v - (L - W/2)) * 255 / W), clamped.
    const grey = (v: number) => Math.min(255, Math.max(0, Math.round((v - (40 - 200)) * (255 / 400))));
    const expected = [...hu.slice(4), ...hu.slice(0, 4)].map(grey);
    expect([...png.pixels]).toEqual(expected);
    expect(expected).toEqual([191, 255, 255, 127, 0, 0, 64, 131]);
  });
});
