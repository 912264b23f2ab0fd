// A slow, obvious scalar version of Joseph's method (P. M. Joseph, IEEE TMI 1(3):192-196, 1982),
// kept only for tests: step one pixel along the ray's major axis, interpolate linearly along
// the other, pixels outside the image are zero, multiply by the step length.
import { firstChannelU, kernelKind, rayAt, viewVectors } from '../../web/core/geometry/view-vectors';
import type { Geometry } from '../../web/core/geometry/types';
import { gridOrigin, type ImageGrid } from '../../web/core/image';

export function josephReference(img: Float32Array, grid: ImageGrid, g: Geometry): Float64Array {
  const views = viewVectors(g);
  const kind = kernelKind(g);
  const nCh = g.detector.channels;
  const nViews = views.length / 12;
  const { x0, y0 } = gridOrigin(grid);
  const at = (i: number, j: number) => (i < 0 || j < 0 || i >= grid.nx || j >= grid.ny ? 0 : img[j * grid.nx + i]);
  const out = new Float64Array(nViews * nCh);
  for (let v = 0; v < nViews; v++) {
    for (let k = 0; k < nCh; k++) {
      const r = rayAt(views, v, kind, firstChannelU(g) + k * g.detector.pitch[0]);
      let sum = 0;
      if (Math.abs(r.dx) >= Math.abs(r.dy)) {
        for (let i = 0; i < grid.nx; i++) {
          const x = x0 + i * grid.dx;
          const fj = (r.py + ((x - r.px) * r.dy) / r.dx - y0) / grid.dy;
          const j = Math.floor(fj), t = fj - j;
          sum += (1 - t) * at(i, j) + t * at(i, j + 1);
        }
        sum *= grid.dx / Math.abs(r.dx);
      } else {
        for (let j = 0; j < grid.ny; j++) {
          const y = y0 + j * grid.dy;
          const fi = (r.px + ((y - r.py) * r.dx) / r.dy - x0) / grid.dx;
          const i = Math.floor(fi), t = fi - i;
          sum += (1 - t) * at(i, j) + t * at(i + 1, j);
        }
        sum *= grid.dy / Math.abs(r.dy);
      }
      out[v * nCh + k] = sum;
    }
  }
  return out;
}
