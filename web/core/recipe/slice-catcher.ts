// Keeps one axial slice of a volume that passes slab by slab (the result's image of a
// cone-beam run is its central slice).
import type { Image2D } from '../image';
import { sliceGrid, type VolumeGrid } from '../volume';
import type { VolumeInfo, VolumeSink } from '../volume-sink';

export class SliceCatcher implements VolumeSink {
  private data?: Float32Array;

  constructor(private readonly grid: VolumeGrid, private readonly k: number) {}

  async write(k0: number, slab: Float32Array): Promise<void> {
    const n = this.grid.nx * this.grid.ny;
    if (this.k >= k0 && this.k < k0 + slab.length / n) this.data = slab.slice((this.k - k0) * n, (this.k - k0 + 1) * n);
  }

  /** The slice as an image (throws when it never passed). */
  image(info: VolumeInfo): Image2D {
    if (!this.data) throw new Error(`slice ${this.k} never reached the sink`);
    return { grid: sliceGrid(this.grid), data: this.data, quantity: info.quantity, muWater: info.muWater, fovRadius: info.fovRadius };
  }
}
