// Rimfill's image frame against the patient frame (README "Image frame"): x toward the
// patient's left, y anterior, z superior, shown with +y up. The patient frame of DICOM (PS3.3
// C.7.6.2.1.1) is left-posterior-superior (LPS): x left, y posterior, z superior. Files that
// name their frame are mapped into Rimfill's on reading and written in LPS on export, rows
// running from anterior to posterior as DICOM stores axial slices, so that the axes point the
// positive way.
import { InputError } from '../errors';

/** Signs that take a point of a named frame into Rimfill's (axis-aligned frames only). */
export type FrameSigns = [number, number, number];

/** Rimfill's frame from LPS: y turns round. */
export const FROM_LPS: FrameSigns = [1, -1, 1];

/** The NRRD `space` Rimfill writes (NRRD format spec, section 4 "Space and orientation"). */
export const NRRD_EXPORT_SPACE = 'left-posterior-superior';

/**
 * NRRD `space` values (full names and abbreviations) and their signs into Rimfill's frame. The
 * scanner frame and a plain right-handed frame carry no patient labels: they are read as
 * Rimfill's own frame, which is the scan's (isocentre at the origin, z along the rotation axis).
 */
const NRRD_SPACES: Record<string, FrameSigns> = {
  'left-posterior-superior': FROM_LPS, lps: FROM_LPS,
  'right-anterior-superior': [-1, 1, 1], ras: [-1, 1, 1],
  'left-anterior-superior': [1, 1, 1], las: [1, 1, 1],
  'scanner-xyz': [1, 1, 1],
  '3d-right-handed': [1, 1, 1],
};

/**
 * Signs from a NRRD `space` field into Rimfill's frame; undefined when the file names no space
 * (then it is read in Rimfill's own frame). Throws InputError for a space that cannot be mapped.
 */
export function nrrdSpaceSigns(space: string | undefined): FrameSigns | undefined {
  if (space === undefined) return undefined;
  const key = space.trim().toLowerCase();
  const signs = NRRD_SPACES[key];
  if (signs) return signs;
  const known = 'left-posterior-superior, right-anterior-superior, left-anterior-superior (or LPS, RAS, LAS), scanner-xyz or 3D-right-handed';
  if (/-time$|^(rast|last|lpst)$/.test(key)) throw new InputError(`image space: got "${space}", a space with a time axis; expected one image or volume in ${known}`);
  if (key === '3d-left-handed') throw new InputError(`image space: got "${space}", a mirrored frame without patient directions, which cannot be placed; expected ${known}`);
  throw new InputError(`image space: got "${space}", expected ${known}`);
}

const OPPOSITE: Record<string, string> = { L: 'R', R: 'L', P: 'A', A: 'P', S: 'I', I: 'S' };
/** The LPS axis of each patient direction and its sign in LPS. */
const LPS_AXIS: Record<string, [number, number]> = { L: [0, 1], R: [0, -1], P: [1, 1], A: [1, -1], S: [2, 1], I: [2, -1] };

/**
 * Checks a MetaImage AnatomicalOrientation (one letter of R/L, A/P, S/I per axis) against the
 * axis directions in LPS (`signs[k]` = +1 or -1 for axis k along LPS axis k). Writers use the
 * letters both ways: the side each axis runs toward, and (the MetaIO toolkit's own files, e.g.
 * "RAI" for identity directions) the side it comes from; either reading that agrees with the
 * directions is accepted. Throws InputError when neither does.
 */
export function checkAnatomicalOrientation(code: string, signs: number[]): void {
  const letters = code.trim().toUpperCase().split('');
  const nd = signs.length;
  const expected = `${nd} letters, one of R/L, A/P, S/I per axis`;
  if (letters.length !== nd || letters.some((c) => !LPS_AXIS[c])) throw new InputError(`MetaImage AnatomicalOrientation: got "${code}", expected ${expected}`);
  const agrees = (toward: string[]) => toward.every((c, k) => LPS_AXIS[c][0] === k && LPS_AXIS[c][1] === signs[k]);
  if (agrees(letters) || agrees(letters.map((c) => OPPOSITE[c]))) return;
  const runs = signs.map((s, k) => (s > 0 ? 'LPS' : 'RAI')[k]).join('');
  throw new InputError(`MetaImage AnatomicalOrientation: got "${code}", but TransformMatrix has the axes run toward ${runs} (axes in another order are not read; resample first)`);
}

/** The AnatomicalOrientation Rimfill writes for axes that run toward L, P (and S): the side each axis comes from. */
export function writtenAnatomicalOrientation(nd: number): string {
  return 'RAI'.slice(0, nd);
}
