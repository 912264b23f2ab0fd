// The truncation correction a scan's own truncation report suggests, with the reason in one
// line: what the page's recipe form starts with and what `rimfill inspect` prints. One place, so
// that better corrections, once measured, are named here for the page and the CLI alike.
import { EXTEND_WORDS, type ExtendMethod } from './extend-methods';
import type { TruncationSummary } from './detect';

export interface CorrectionAdvice {
  /** The detector extension to run FBP with. */
  extend: ExtendMethod;
  /** The correction in words ("water cylinder"). */
  label: string;
  /** Why, in one line, from the scan's figures. */
  reason: string;
}

const pct = (f: number) => `${Math.round(100 * f)}%`;

/** The sides cut off, in words. */
function sides(s: TruncationSummary): string {
  if (s.leftFraction > 0 && s.rightFraction > 0) return 'both edges';
  return s.leftFraction > 0 ? 'the left edge only' : 'the right edge only';
}

/**
 * The correction for a scan with this truncation summary: none when no view is cut off, else
 * water cylinder extrapolation, which continues each cut-off view as far as a water cylinder
 * fitted to its edge value and slope reaches (Hsieh et al. 2004); of the extrapolations offered
 * it is the one that estimates the missing extent from the data.
 */
export function recommendCorrection(s: TruncationSummary): CorrectionAdvice {
  if (!(s.truncatedFraction > 0)) {
    return { extend: 'none', label: EXTEND_WORDS.none, reason: 'no view is cut off at the detector edges: nothing to correct' };
  }
  const reach = Math.max(s.maxExtentMm.left, s.maxExtentMm.right);
  return {
    extend: 'water',
    label: EXTEND_WORDS.water,
    reason: `${pct(s.truncatedFraction)} of views are cut off (${sides(s)}), the object reaching up to ${reach.toFixed(0)} mm beyond; ` +
      'a water cylinder fitted to each edge continues the view that far (Hsieh et al. 2004)',
  };
}
