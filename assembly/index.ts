// The engine's only export surface. Kernels take byte addresses and sizes; the host owns all
// memory (runtime "stub": nothing here allocates). See DEVELOPERS.md for the calling rules.
import { ABI_VERSION } from './abi';
export { ABI_VERSION, KIND_PARALLEL, KIND_FAN_FLAT, KIND_FAN_CURVED, VIEW_STRIDE } from './abi';
export { scaleArray, addScaled, multiplyArrays, zeroArray, dotArrays, padImage2d, unpadAdd2d } from './arith';
export { fftPrepare, fft, realEvenResponse, filterViews } from './fft';
export { rayTableFloats } from './rays';
export { josephForward2d, josephAdjoint2d } from './joseph';
export { backproject2d, atanApprox } from './backproject';
export { dbpPoints } from './dbp';
export { chordGram, chordBand, chordFactor, chordSolve, chordMultiply, CHORD_TABLE_STRIDE } from './chord-blocks';
export { extendViews, EXTEND_ZERO, EXTEND_EDGE, EXTEND_MIRROR, EXTEND_WATER, EXTEND_COSINE, EXTEND_PARAMS } from './extend';
export { coneFilterViews } from './cone-filter';
export { backprojectCone } from './cone-backproject';
export { padConeRows, packRows } from './cone-blocks';
export { coneFilterPairs, backprojectConeAxial, columnsToSlab } from './cone-backproject-axial';
export { padVolume, unpadVolume } from './cone-volume';
export { josephForwardCone, josephAdjointCone } from './cone-joseph';
export { sartWeights, sartCorrection, sartUpdate, squaredDistances, copyRange } from './sart';
export { tvScale, tvGradient, tvWeights } from './tv';
export { padImageRows, unpadSumRows } from './image-bands';
export { tv3Scale, tv3Gradient, tv3Weights } from './tv3d';

/** First byte the host may use for its buffers. */
export function heapBase(): usize {
  return __heap_base;
}

/** ABI version, as a function so hosts can check it before anything else. */
export function abiVersion(): i32 {
  return ABI_VERSION;
}
