import { describe, expect, it } from 'vitest';
import { writeImageNrrd } from '../../web/core/formats/image-nrrd';
import { readImageNrrd } from '../helpers/read-nrrd';
import { writeScanNrrd } from '../../web/core/formats/scan-nrrd';
import { readScanNrrd } from '../helpers/read-nrrd';
import { parseNrrd } from '../../web/core/formats/nrrd';
import { presetGeometry } from '../../web/core/geometry/presets';

describe('scan and image NRRD files (README, "Files")', () => {
  it('a scan round-trips: data, geometry and mu_water', async () => {
    const g = presetGeometry('demo-parallel')!;
    const data = Float32Array.from({ length: g.detector.channels * 360 }, (_, i) => Math.sin(i));
    for (const gz of [false, true]) {
      const bytes = await writeScanNrrd({ geometry: g, data, muWater: 0.0206 }, gz);
      const head = new TextDecoder().decode(bytes.subarray(0, 200));
      expect(head).toMatch(/^NRRD0004\n/);
      expect(head).toContain(`sizes: ${g.detector.channels} 1 360`);
      const back = await readScanNrrd(bytes);
      // Bit for bit (compared as bytes: a deep comparison of 400 000 elements takes seconds).
      expect(Buffer.from(back.data.buffer, back.data.byteOffset, back.data.byteLength).equals(Buffer.from(data.buffer))).toBe(true);
      expect(back.data.length).toBe(data.length);
      expect(back.geometry).toEqual(g);
      expect(back.muWater).toBe(0.0206);
    }
  });

  it('an image round-trips with its grid (space origin = centre of the first pixel, NRRD spec)', async () => {
    const grid = { nx: 5, ny: 3, dx: 0.5, dy: 0.75, cx: 10, cy: -2 };
    const data = Float32Array.from({ length: 15 }, (_, i) => i / 7);
    const bytes = await writeImageNrrd({ grid, data, quantity: 'mu', muWater: 0.02, fovRadius: 99 });
    // Written in the patient frame LPS, rows from anterior (Rimfill's top row, y = -1.25 mm, so
    // LPS y = 1.25) to posterior: every direction positive, as DICOM stores an axial slice.
    const text = new TextDecoder().decode(bytes);
    expect(text).toContain('space: left-posterior-superior\n');
    expect(text).toContain('space directions: (0.5,0,0) (0,0.75,0)\n');
    expect(text).toContain('space origin: (9,1.25,0)\n');
    const n = await parseNrrd(bytes);
    expect(Array.from(n.data.subarray(0, 5))).toEqual(Array.from(data.subarray(10, 15)));
    const back = await readImageNrrd(bytes);
    expect(back.grid).toEqual(grid);
    expect(back.data).toEqual(data);
    expect(back.fovRadius).toBe(99);
  });

  it('refuses a file whose data is shorter than its header says', async () => {
    const g = presetGeometry('demo-parallel')!;
    const bytes = await writeScanNrrd({ geometry: g, data: new Float32Array(g.detector.channels * 360) });
    await expect(readScanNrrd(bytes.subarray(0, bytes.length - 4))).rejects.toThrow(/promises \d+ bytes of data from byte \d+, the file holds \d+/);
  });
});
