// Constants shared with the host (web/core/engine/abi.ts pins the same values; a test checks both).

/** Bumped whenever a kernel signature or a table layout changes. */
export const ABI_VERSION: i32 = 1;

/** Geometry kinds understood by the kernels. */
export const KIND_PARALLEL: i32 = 0;
export const KIND_FAN_FLAT: i32 = 1;
export const KIND_FAN_CURVED: i32 = 2;

/**
 * Floats per view in a view table: [a(3), detectorCentre(3), u(3), v(3)], mm.
 * For divergent beams `a` is the source position; for parallel beams it is the unit ray
 * direction (source side towards detector).
 */
export const VIEW_STRIDE: i32 = 12;
