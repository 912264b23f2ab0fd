// Statistics of a reprojection residual r = A f - p over the measured rays of a scan: per view,
// per channel, one overall consistency figure, and the rays that disagree beyond the residual's
// own spread. Disagreement is judged on the residual averaged over a few neighbouring channels
// (a structure's width on the detector): the prior's pixel grid and the data's noise leave
// residual spikes one or two channels wide at sharp edges, while a structure that is wrong in
// the image leaves a band as wide as the structure's shadow. The spread is measured among rays
// of similar measured value (noise-bins.ts), as photon noise grows with the line integral.
import { noiseBins, robustSigmaOf, type NoiseBin } from './noise-bins';

/** The overall figures of a residual sinogram. */
export interface ResidualSummary {
  /**
   * The consistency figure: relative RMS residual on the measured rays,
   * ||A f - p||_2 / ||p||_2 (the normalized data discrepancy that the data constraint
   * ||A f - p|| <= epsilon of Sidky & Pan 2008 bounds). 0 = the image explains the data exactly.
   */
  relativeRms: number;
  /** RMS of A f - p over the measured rays (line-integral units). */
  rmsResidual: number;
  /** Mean of A f - p (a bias: > 0 the image attenuates too much overall). */
  meanResidual: number;
  /** RMS of the measured line integrals. */
  rmsMeasured: number;
  /** Rays used (finite measured values). */
  rays: number;
  /** Rays left out because their measured value is NaN or infinite. */
  excludedRays: number;
  /** Channels averaged before flagging (odd; 1 = none). */
  averagedChannels: number;
  /** Robust spread of the channel-averaged residual over all rays: 1.4826 * median |a - median a| (a Gaussian's sigma). */
  robustSigma: number;
  /** The same among rays of similar measured value, by measured value (increasing). */
  noiseBins: NoiseBin[];
  /**
   * Channel-averaged residual magnitude above which a ray counts as disagreeing: max(5 sigma of
   * its bin, floor). The smallest and the largest over the bins.
   */
  threshold: number;
  thresholdMax: number;
  /** Rays above the threshold, and their share of the measured rays. */
  flaggedRays: number;
  flaggedFraction: number;
  /** Views with at least one flagged ray. */
  flaggedViews: number;
}

export interface ResidualProfiles {
  /** 1 where the ray disagrees ([view][channel]). */
  flagged: Uint8Array;
  /** Per view: RMS residual, RMS relative to that view's RMS data, largest |residual|, flagged rays. */
  viewRms: Float32Array;
  viewRelative: Float32Array;
  viewMaxAbs: Float32Array;
  viewFlagged: Int32Array;
  /** Per channel: RMS residual over the views. */
  channelRms: Float32Array;
}

/** Rays flagged when |a| exceeds this many robust sigmas (Hampel's outlier rule, common practice). */
export const FLAG_SIGMAS = 5;

/** Moving average over `width` channels (odd) within each view, skipping NaN values. */
export function averageChannels(residual: Float32Array, nViews: number, nCh: number, width: number): Float32Array {
  const half = width >> 1;
  const out = new Float32Array(residual.length);
  for (let v = 0; v < nViews; v++) {
    const row = v * nCh;
    for (let k = 0; k < nCh; k++) {
      if (!Number.isFinite(residual[row + k])) {
        out[row + k] = NaN;
        continue;
      }
      let s = 0, n = 0;
      for (let j = Math.max(0, k - half); j <= Math.min(nCh - 1, k + half); j++) {
        const r = residual[row + j];
        if (Number.isFinite(r)) {
          s += r;
          n++;
        }
      }
      out[row + k] = s / n;
    }
  }
  return out;
}

/**
 * Summarizes `residual` = A f - p ([view][channel]; NaN where the measured value is not
 * finite) against `measured`. Flags use the residual averaged over `width` channels (odd),
 * against 5 robust sigmas of the rays with similar measured values; `floor` is the smallest
 * threshold (line-integral units), so that an almost perfect image does not flag its rounding.
 */
export function residualStats(residual: Float32Array, measured: Float32Array, nViews: number, nCh: number, width: number, floor: number): { summary: ResidualSummary; profiles: ResidualProfiles } {
  const averaged = averageChannels(residual, nViews, nCh, width);
  const finite = new Float32Array(residual.length);
  let rays = 0, sumR = 0, sumR2 = 0, sumP2 = 0;
  for (let i = 0; i < residual.length; i++) {
    const r = residual[i];
    if (!Number.isFinite(r)) continue;
    finite[rays++] = averaged[i];
    sumR += r;
    sumR2 += r * r;
    sumP2 += measured[i] * measured[i];
  }
  const robustSigma = robustSigmaOf(finite.subarray(0, rays));
  const { bins, binOf } = noiseBins(averaged, measured);
  const binThreshold = bins.map((b) => Math.max(FLAG_SIGMAS * b.sigma, floor));

  const profiles = viewProfiles(residual, measured, nViews, nCh, (i) => {
    const b = binOf[i];
    return b >= 0 && Math.abs(averaged[i]) > binThreshold[b];
  });
  const { viewFlagged } = profiles;
  const flaggedRays = viewFlagged.reduce((a, c) => a + c, 0);
  const summary: ResidualSummary = {
    relativeRms: sumP2 > 0 ? Math.sqrt(sumR2 / sumP2) : NaN,
    rmsResidual: rays ? Math.sqrt(sumR2 / rays) : NaN,
    meanResidual: rays ? sumR / rays : NaN,
    rmsMeasured: rays ? Math.sqrt(sumP2 / rays) : NaN,
    rays,
    excludedRays: residual.length - rays,
    averagedChannels: width,
    robustSigma,
    noiseBins: bins,
    threshold: binThreshold.length ? Math.min(...binThreshold) : floor,
    thresholdMax: binThreshold.length ? Math.max(...binThreshold) : floor,
    flaggedRays,
    flaggedFraction: rays ? flaggedRays / rays : 0,
    flaggedViews: viewFlagged.reduce((a, c) => a + (c > 0 ? 1 : 0), 0),
  };
  return { summary, profiles };
}

/** Per view: RMS, relative RMS, largest |residual| and flagged rays (`flag(i)`); per channel: RMS. */
function viewProfiles(residual: Float32Array, measured: Float32Array, nViews: number, nCh: number, flag: (i: number) => boolean): ResidualProfiles {
  const viewRms = new Float32Array(nViews), viewRelative = new Float32Array(nViews), viewMaxAbs = new Float32Array(nViews);
  const viewFlagged = new Int32Array(nViews);
  const flagged = new Uint8Array(residual.length);
  const chSum = new Float64Array(nCh), chCount = new Float64Array(nCh);
  for (let v = 0; v < nViews; v++) {
    let s2 = 0, p2 = 0, n = 0, mx = 0;
    for (let k = 0; k < nCh; k++) {
      const r = residual[v * nCh + k];
      if (!Number.isFinite(r)) continue;
      s2 += r * r;
      p2 += measured[v * nCh + k] ** 2;
      n++;
      mx = Math.max(mx, Math.abs(r));
      chSum[k] += r * r;
      chCount[k]++;
      if (flag(v * nCh + k)) {
        flagged[v * nCh + k] = 1;
        viewFlagged[v]++;
      }
    }
    viewRms[v] = n ? Math.sqrt(s2 / n) : NaN;
    viewRelative[v] = p2 > 0 ? Math.sqrt(s2 / p2) : NaN;
    viewMaxAbs[v] = mx;
  }
  const channelRms = new Float32Array(nCh);
  for (let k = 0; k < nCh; k++) channelRms[k] = chCount[k] ? Math.sqrt(chSum[k] / chCount[k]) : NaN;
  return { flagged, viewRms, viewRelative, viewMaxAbs, viewFlagged, channelRms };
}
