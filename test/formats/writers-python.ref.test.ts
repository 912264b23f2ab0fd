// Rimfill's writers read back by independent general-purpose readers run live (reference tier,
// npm run test:reference): Pillow decodes the windowed PNG, tifffile the float32 TIFF stack.
// These check fresh output of our writers, so they cannot be fixtures.
import { describe, expect, it } from 'vitest';
import type { Image2D } from '../../web/core/image';
import { writeTiffStack } from '../../web/core/formats/tiff';
import { writeImageFile } from '../../web/core/formats/write-image';
import { runPython } from '../helpers/python';

describe('our files in Python readers', () => {
  it('Pillow decodes the grey levels the window rule gives (lower = L - W/2, upper = L + W/2)', async () => {
    // HU values across and beyond a soft-tissue window W 400, L 40 (REFERENCES.md [window-presets]).
    const hu = new Float32Array([-1000, -160, -60, 45, 140, 240, 1000, 39.9]);
    const img: Image2D = { grid: { nx: 4, ny: 2, dx: 1, dy: 1, cx: 0, cy: 0 }, data: hu, quantity: 'hu' };
    const w = await writeImageFile(img, 'win', { format: 'png', window: { width: 400, level: 40 } });
    const py = runPython(
      'from PIL import Image\nim = Image.open("win.png")\nprint(im.mode, im.size[0], im.size[1], " ".join(str(v) for v in im.getdata()))',
      ['PIL'], { 'win.png': w.files[0].bytes },
    );
    const [mode, width, height, ...values] = py.stdout.trim().split(/\s+/);
    expect([mode, width, height]).toEqual(['L', '4', '2']);
    // Rows are written top (j = ny - 1) to bottom; grey = round((v - (L - W/2)) * 255 / W), clamped.
    const grey = (v: number) => Math.min(255, Math.max(0, Math.round((v - (40 - 200)) * (255 / 400))));
    expect(values.map(Number)).toEqual([...hu.slice(4), ...hu.slice(0, 4)].map(grey));
  });

  it('tifffile reads our float32 stack: frames, rows and values', () => {
    const data = Float32Array.from({ length: 5 * 3 * 4 }, (_, i) => Math.sin(i * 0.7) * 100 + i / 8);
    const bytes = writeTiffStack({ width: 4, height: 3, frames: 5, data });
    const py = runPython(
      'import tifffile, numpy as np\na = tifffile.imread("s.tif")\nprint(" ".join(str(n) for n in a.shape), a.dtype)\na.astype("<f4").tofile("back.f32")',
      ['tifffile', 'numpy'], { 's.tif': bytes },
    );
    expect(py.stdout.trim()).toBe('5 3 4 float32');
    const back = py.files['back.f32'];
    expect(new Float32Array(back.buffer.slice(back.byteOffset, back.byteOffset + back.byteLength))).toEqual(data);
  });
});
