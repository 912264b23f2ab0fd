// The grid a recipe without one gets, in words for the recipe form: the same grid the command line
// picks (chooseGrid / chooseVolumeGrid), from the object radius of the coordinator's truncation
// report (truncationOverview, which also gives the suggested correction).
import type { Geometry } from '../../core/geometry/types';
import { chooseGrid } from '../../core/recipe/grid';
import { chooseVolumeGrid } from '../../core/recipe/volume-grid';
import type { Scan } from '../../core/scan';

const trim = (v: number) => String(Number(v.toPrecision(3)));

/** The default grid in words, from the scan's estimated object radius (as chooseGrid / chooseVolumeGrid compute it). */
export function defaultGridText(geometry: Geometry, objectRadiusMm: number): string {
  const scan: Scan = { geometry, data: new Float32Array(0) };
  if (geometry.kind === 'cone') {
    const v = chooseVolumeGrid(scan, undefined, undefined, objectRadiusMm);
    return `${v.nx} px × ${trim(v.dx)} mm, ${v.nz} slices`;
  }
  const g = chooseGrid(scan, undefined, objectRadiusMm);
  return `${g.nx} px × ${trim(g.dx)} mm`;
}
