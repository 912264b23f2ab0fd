// Host-side copy of the engine's ABI constants (assembly/abi.ts); test/engine/abi.test.ts
// checks that both sides agree.

/** The engine ABI version this host expects. */
export const ABI_VERSION = 1;

/** Wasm page size, bytes. */
export const PAGE_BYTES = 65536;

/** Largest memory the engine module declares, in pages (4 GiB). */
export const MAX_PAGES = 65536;

/** Names of the exported kernels (the only functions a workspace call may name). */
export type KernelName =
  | 'scaleArray' | 'addScaled' | 'multiplyArrays' | 'zeroArray' | 'dotArrays'
  | 'padImage2d' | 'unpadAdd2d'
  | 'fftPrepare' | 'fft' | 'realEvenResponse' | 'filterViews'
  | 'rayTableFloats' | 'josephForward2d' | 'josephAdjoint2d'
  | 'backproject2d' | 'atanApprox' | 'dbpPoints'
  | 'chordGram' | 'chordBand' | 'chordFactor' | 'chordSolve' | 'chordMultiply'
  | 'extendViews'
  | 'coneFilterViews' | 'backprojectCone' | 'padConeRows' | 'packRows' | 'padVolume' | 'unpadVolume'
  | 'coneFilterPairs' | 'backprojectConeAxial' | 'columnsToSlab'
  | 'josephForwardCone' | 'josephAdjointCone'
  | 'sartWeights' | 'sartCorrection' | 'sartUpdate' | 'squaredDistances' | 'copyRange'
  | 'tvScale' | 'tvGradient' | 'tvWeights'
  | 'padImageRows' | 'unpadSumRows'
  | 'tv3Scale' | 'tv3Gradient' | 'tv3Weights';

/** The exports of an engine instance, as the host sees them. */
export type EngineExports = Record<KernelName, (...args: number[]) => number> & {
  heapBase(): number;
  abiVersion(): number;
};
