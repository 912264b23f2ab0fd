// rimfill compare on images in HU without mu_water, and on grids that cover each other only in
// part: the figures are the textbook ones over the pixels compared; a small overlap is reported
// with its share, no overlap is refused (exit 2, one line, nothing written).
import { mkdtempSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, describe, expect, it } from 'vitest';
import { writeImageNrrd } from '../../web/core/formats/image-nrrd';
import type { Image2D } from '../../web/core/image';
import { rimfill } from '../helpers/cli';

const dir = mkdtempSync(join(tmpdir(), 'rimfill-compare-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const n = 32;
/** A HU image with no mu_water: a soft-tissue disk (40 HU) in air, plus `bump` HU in one quadrant. */
function huImage(cx: number, bump: number): Image2D {
  const data = new Float32Array(n * n);
  for (let j = 0; j < n; j++) {
    for (let i = 0; i < n; i++) {
      const x = (i - (n - 1) / 2) * 2, y = (j - (n - 1) / 2) * 2;
      data[j * n + i] = (Math.hypot(x, y) < 24 ? 40 : -1000) + (i < n / 2 && j < n / 2 ? bump : 0);
    }
  }
  return { grid: { nx: n, ny: n, dx: 2, dy: 2, cx, cy: 0 }, data, quantity: 'hu' };
}

async function write(name: string, image: Image2D): Promise<void> {
  writeFileSync(join(dir, name), await writeImageNrrd(image));
}

describe('rimfill compare', () => {
  it('compares two HU images without mu_water, in HU', async () => {
    const a = huImage(0, 12), b = huImage(0, 0);
    await write('a.nrrd', a);
    await write('b.nrrd', b);
    const r = rimfill(['compare', 'a.nrrd', '--reference', 'b.nrrd', '--json'], dir);
    expect(r.code, r.stderr).toBe(0);
    const c = JSON.parse(r.stdout);
    expect(c.unit).toBe('HU');
    expect(c.overlap).toBe(1);
    // RMSE = sqrt(mean((a - b)^2)) (definition): a quarter of the pixels differ by 12 HU.
    expect(c.regions.image.rmse).toBeCloseTo(Math.sqrt((12 * 12) / 4), 3);
    expect(r.stderr).toMatch(/both images hold HU and neither records mu_water: compared in HU as they are/);
  });

  it('a NRRD in a named patient frame compares with the DICOM it came from at under 0.5 HU (test/fixtures/frames)', () => {
    const frames = fileURLToPath(new URL('../fixtures/frames/', import.meta.url));
    const r = rimfill(['compare', 'ct-small-lps.nrrd', '--reference', 'ct-small.dcm', '--json'], frames);
    expect(r.code, r.stderr).toBe(0);
    const c = JSON.parse(r.stdout);
    expect(c.overlap).toBeCloseTo(1, 9);
    expect(c.resampled).toBe(false);
    expect(c.regions.image.rmse).toBeLessThan(0.5);
  });

  it('reports a reference that covers less than 90% of the image, with the share', async () => {
    await write('shifted.nrrd', huImage(0.3 * n * 2, 0)); // 30% of the width to the side
    const r = rimfill(['compare', 'a.nrrd', '--reference', 'shifted.nrrd', '--json'], dir);
    expect(r.code, r.stderr).toBe(0);
    expect(JSON.parse(r.stdout).overlap).toBeCloseTo(0.7, 9);
    expect(r.stderr).toMatch(/the reference covers only 70\.0% of the image's area/);
  });

  it('refuses a reference that does not overlap the image', async () => {
    await write('apart.nrrd', huImage(n * 2 + 10, 0));
    const before = readdirSync(dir).sort();
    const r = rimfill(['compare', 'a.nrrd', '--reference', 'apart.nrrd', '--json'], dir);
    expect(r.code).toBe(2);
    expect(r.stderr.trim().split('\n')).toHaveLength(1);
    expect(r.stderr).toMatch(/reference: it does not overlap the image \(image x -32\.0 to 32\.0, y -32\.0 to 32\.0 mm; reference x 42\.0 to 106\.0/);
    expect(r.stdout).toBe('');
    expect(readdirSync(dir).sort()).toEqual(before);
  });

  it('still needs mu_water when one image holds mu and the other HU', async () => {
    await write('mu.nrrd', { ...huImage(0, 0), data: new Float32Array(n * n).fill(0.02), quantity: 'mu' });
    const r = rimfill(['compare', 'mu.nrrd', '--reference', 'b.nrrd'], dir);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/values are HU but mu_water is unknown; give it with --mu-water/);
  });
});
