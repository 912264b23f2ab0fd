// Reading a consistency report for people: where the flagged rays lie (runs of views and the
// channels they span), a symmetric colour scale for the residual sinogram, and a diverging
// colour map (negative blue, zero white, positive red: the image attenuates too little / too
// much along the ray).

/** A run of neighbouring views holding flagged rays. */
export interface ViewRun {
  /** First and last view of the run (scan order). */
  first: number;
  last: number;
  /** Flagged rays in the run. */
  rays: number;
  /** Lowest and highest channel of a flagged ray in the run. */
  firstChannel: number;
  lastChannel: number;
}

/**
 * Runs of views with flagged rays, bridging gaps of up to `gap` views without any, largest
 * (most rays) first. `flagged` is [view][channel], `nCh` channels per view.
 */
export function disagreeingRuns(flagged: Uint8Array, nCh: number, gap = 2): ViewRun[] {
  const nViews = Math.floor(flagged.length / nCh);
  const runs: ViewRun[] = [];
  let open: ViewRun | undefined;
  for (let v = 0; v < nViews; v++) {
    let rays = 0, lo = nCh, hi = -1;
    for (let k = 0; k < nCh; k++) {
      if (!flagged[v * nCh + k]) continue;
      rays++;
      if (k < lo) lo = k;
      hi = k;
    }
    if (!rays) continue;
    if (open && v - open.last <= gap + 1) {
      open.last = v;
      open.rays += rays;
      open.firstChannel = Math.min(open.firstChannel, lo);
      open.lastChannel = Math.max(open.lastChannel, hi);
    } else {
      open = { first: v, last: v, rays, firstChannel: lo, lastChannel: hi };
      runs.push(open);
    }
  }
  return runs.sort((a, b) => b.rays - a.rays || a.first - b.first);
}

const deg = (a: number) => `${Number(a.toFixed(1))}°`;

/** "views 34–80 (17°–40°), channels 12–58: 1234 rays" for a run; angles when the scan has them. */
export function describeRun(r: ViewRun, anglesDeg?: ArrayLike<number>): string {
  const views = r.first === r.last ? `view ${r.first}` : `views ${r.first}–${r.last}`;
  const angles = anglesDeg ? ` (${r.first === r.last ? deg(anglesDeg[r.first]) : `${deg(anglesDeg[r.first])}–${deg(anglesDeg[r.last])}`})` : '';
  const channels = r.firstChannel === r.lastChannel ? `channel ${r.firstChannel}` : `channels ${r.firstChannel}–${r.lastChannel}`;
  return `${views}${angles}, ${channels}: ${r.rays} ray${r.rays === 1 ? '' : 's'}`;
}

/**
 * Half-range of the residual colour scale: the larger of the flagging threshold and the 99.5th
 * percentile of |residual| (so that a few extreme rays do not wash the rest out), never 0.
 */
export function residualHalfRange(residual: Float32Array, threshold: number): number {
  const step = Math.max(1, Math.floor(residual.length / 200_000));
  const sample: number[] = [];
  for (let i = 0; i < residual.length; i += step) if (Number.isFinite(residual[i])) sample.push(Math.abs(residual[i]));
  sample.sort((a, b) => a - b);
  const p = sample.length ? sample[Math.min(sample.length - 1, Math.floor(0.995 * sample.length))] : 0;
  const h = Math.max(threshold, p);
  return h > 0 ? h : 1;
}

// End and middle colours of ColorBrewer's RdBu scheme (Brewer 2003; common practice for
// signed data): blue for negative, near-white for zero, red for positive.
const NEG = [33, 102, 172], MID = [247, 247, 247], POS = [178, 24, 43];

/** RGB of a signed value under a symmetric scale of half-range `h` (clamped; NaN grey). */
export function divergingRgb(v: number, h: number): [number, number, number] {
  if (!Number.isFinite(v)) return [128, 128, 128];
  const t = Math.max(-1, Math.min(1, v / h));
  const end = t < 0 ? NEG : POS, a = Math.abs(t);
  return [0, 1, 2].map((c) => Math.round(MID[c] + (end[c] - MID[c]) * a)) as [number, number, number];
}
