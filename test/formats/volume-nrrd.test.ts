import { describe, expect, it } from 'vitest';
import { parseNrrd } from '../../web/core/formats/nrrd';
import { writeVolumeNrrd } from '../../web/core/formats/volume-nrrd';
import { readImageFile } from '../../web/core/formats/read-image';
import { asMuVolume } from '../../web/core/formats/volume';
import { InputError } from '../../web/core/errors';
import type { Volume } from '../../web/core/volume';

/** Reads volume bytes the one way every volume is read: readImageFile, then asMuVolume. */
async function readVolumeNrrd(bytes: Uint8Array, muWater?: number): Promise<Volume> {
  return asMuVolume((await readImageFile([{ name: 'volume.nrrd', bytes }])).volume, muWater);
}

const volume = (): Volume => ({
  grid: { nx: 5, ny: 4, nz: 3, dx: 0.5, dy: 0.75, dz: 2, cx: 1, cy: -2, cz: 10 },
  data: Float32Array.from({ length: 60 }, (_, i) => i * 0.001 - 0.01),
  quantity: 'mu',
  muWater: 0.0206,
  fovRadius: 118.5,
  fovHalfHeight: 90,
});

function nrrd(header: string[], data: Float32Array): Uint8Array {
  const head = new TextEncoder().encode(['NRRD0004', ...header, '', ''].join('\n'));
  const out = new Uint8Array(head.length + data.byteLength);
  out.set(head);
  out.set(new Uint8Array(data.buffer), head.length);
  return out;
}

describe('volume NRRD', () => {
  it.each([false, true])('round-trips grid, values and FOV fields (gzip %s)', async (gz) => {
    const v = volume();
    const back = await readVolumeNrrd(await writeVolumeNrrd(v, gz));
    expect(back.grid.nx).toBe(5);
    expect(back.grid.nz).toBe(3);
    for (const k of ['dx', 'dy', 'dz', 'cx', 'cy', 'cz'] as const) expect(back.grid[k]).toBeCloseTo(v.grid[k], 12);
    expect(back.data).toEqual(v.data);
    expect([back.muWater, back.fovRadius, back.fovHalfHeight]).toEqual([0.0206, 118.5, 90]);
  });

  // NRRD format spec (teem.sourceforge.net/nrrd/format.html): "space directions" gives one
  // vector per axis and "space origin" the position of the first sample, in world units.
  it('writes the standard space fields: first voxel centre and per-axis vectors', async () => {
    const n = await parseNrrd(await writeVolumeNrrd(volume()));
    expect(n.sizes).toEqual([5, 4, 3]);
    expect(n.fields.space).toBe('left-posterior-superior');
    expect(n.fields['space directions']).toBe('(0.5,0,0) (0,0.75,0) (0,0,2)');
    // x0 = 1 - 2 * 0.5, z0 = 10 - 1 * 2; rows run from the most anterior (Rimfill y = -2 + 1.5 *
    // 0.75 = -0.875, so LPS y = 0.875) toward posterior.
    expect(n.fields['space origin']).toBe('(0,0.875,8)');
    expect(n.keys['rimfill.quantity']).toBe('mu');
  });

  it('reads a volume written by another tool with only spacings, and HU with mu_water', async () => {
    const hu = Float32Array.from({ length: 8 }, (_, i) => (i % 2 ? 0 : -1000));
    const v = await readVolumeNrrd(nrrd(['type: float', 'dimension: 3', 'sizes: 2 2 2', 'endian: little', 'encoding: raw', 'spacings: 1 1 2.5', 'rimfill.quantity:=hu'], hu), 0.02);
    expect(v.grid.dz).toBe(2.5);
    expect(v.grid.cz).toBe(0);
    expect(v.data[0]).toBeCloseTo(0, 9);
    expect(v.data[1]).toBeCloseTo(0.02, 9);
  });

  it('turns axes that point the other way, z included (NRRD space directions)', async () => {
    // Voxel value = its index; with z running downwards from z = 4 mm the slices come back in
    // increasing z, starting at 4 - 2 x 1.5 = 1 mm.
    const d = Float32Array.from({ length: 12 }, (_, i) => i);
    const v = await readVolumeNrrd(nrrd(['type: float', 'dimension: 3', 'sizes: 2 2 3', 'endian: little', 'encoding: raw', 'space dimension: 3',
      'space directions: (1,0,0) (0,1,0) (0,0,-1.5)', 'space origin: (0,0,4)'], d));
    expect(v.grid.dz).toBe(1.5);
    expect(v.grid.cz).toBeCloseTo(2.5, 12);
    expect(Array.from(v.data)).toEqual([8, 9, 10, 11, 4, 5, 6, 7, 0, 1, 2, 3]);
  });

  it('rejects what it cannot place in space, naming the problem', async () => {
    const d = new Float32Array(8);
    const base = ['type: float', 'dimension: 3', 'sizes: 2 2 2', 'endian: little', 'encoding: raw'];
    await expect(readVolumeNrrd(nrrd([...base, 'space dimension: 3', 'space directions: (1,0.5,0) (0,1,0) (0,0,1)'], d))).rejects.toThrow(/expected axis-aligned directions/);
    await expect(readVolumeNrrd(nrrd([...base, 'space dimension: 3', 'space directions: (1,0,0) (0,1,0)'], d))).rejects.toThrow(/expected 3 vectors, one per axis/);
    await expect(readVolumeNrrd(nrrd([...base, 'rimfill.quantity:=hu'], d))).rejects.toThrow(/values are HU but mu_water is unknown/);
    await expect(readVolumeNrrd(nrrd([...base, 'rimfill.fovRadius:=-3'], d))).rejects.toThrow(InputError);
    await expect(readVolumeNrrd(nrrd([...base, 'rimfill.fovHalfHeight:=x'], d))).rejects.toThrow(/rimfill.fovHalfHeight: got "x"/);
  });
});
