// Prior-guided data-consistent reconstruction (the errors a prior may carry; the fast tier's
// iterative/prior.test.ts checks the recovery outside the FOV and the report) on the thorax demo phantom truncated to about 60%
// of its width (preset "demo", 345 of 1100 channels: FOV radius 102 mm, body 340 mm wide).
// The prior is "correct outside the FOV" (the phantom there) and wrong inside (water). The
// method must recover the outside region (from the prior's projections on the unmeasured
// channels) far better than FBP of the truncated scan, and inside the FOV the measured data
// must overrule the prior: a false bright disk or added noise in the prior must not survive.
// Sources: the method as summarized in REFERENCES.md [dc-prior]; thorax attenuation from NIST SRD 126 (materials.ts).
import { beforeAll, describe, expect, it } from 'vitest';
import { circleMask } from '../../web/core/metrics';
import { seededRandom } from '../../web/core/simulate/noise';
import { grid, N, priorCase, truth, type PriorCase } from '../helpers/prior-case';

let insideFov: PriorCase['insideFov'], basePrior: PriorCase['basePrior'], base: PriorCase['base'], runPrior: PriorCase['runPrior'];

beforeAll(async () => {
  ({ insideFov, basePrior, base, runPrior } = await priorCase());
});

describe('prior-guided data-consistent reconstruction', () => {
  it('a false bright disk in the prior inside the FOV loses at least 80% of its contrast', async () => {
    const amplitude = 0.01; // about +500 HU
    const disk = circleMask({ ...grid, cx: -30, cy: -20 }, 15);
    const r = await runPrior(basePrior.map((v, i) => v + amplitude * disk[i]));
    let kept = 0, n = 0;
    for (let i = 0; i < disk.length; i++) {
      if (!disk[i]) continue;
      kept += r.image.data[i] - base.image.data[i];
      n++;
    }
    expect(n).toBeGreaterThan(40);
    expect(Math.abs(kept / n)).toBeLessThan(0.2 * amplitude);
  });

  it('noise added to the prior loses at least 80% of its amplitude inside the FOV', async () => {
    const sigma = 0.002; // about 100 HU
    const rand = seededRandom(9);
    const gauss = () => Math.sqrt(-2 * Math.log(1 - rand())) * Math.cos(2 * Math.PI * rand());
    const r = await runPrior(basePrior.map((v) => v + sigma * gauss()));
    // The noise makes air pixels of this prior the user gave negative: worth a warning that says
    // what it means (the base prior has none).
    expect(r.warnings.join(' ')).toMatch(/prior: \d+ pixels have negative attenuation \(lowest -[\d.e-]+ \/mm\), which no material has/);
    expect(base.warnings.join(' ')).not.toMatch(/negative attenuation/);
    // Compared where the object is flat (no edge within 2 pixels): at edges TV moves a little
    // differently with and without the noise, which is not noise kept from the prior.
    const flat = flatPixels(truth, N, 2, 0.001);
    let s2 = 0, n = 0;
    for (let i = 0; i < truth.length; i++) {
      if (!insideFov[i] || !flat[i]) continue;
      s2 += (r.image.data[i] - base.image.data[i]) ** 2;
      n++;
    }
    expect(n).toBeGreaterThan(500);
    expect(Math.sqrt(s2 / n)).toBeLessThan(0.2 * sigma);
  });
});

/** Pixels whose (2r+1)^2 neighbourhood in `img` varies by at most `tol`. */
function flatPixels(img: Float32Array, n: number, r: number, tol: number): Uint8Array {
  const out = new Uint8Array(img.length);
  for (let j = r; j < n - r; j++) {
    for (let i = r; i < n - r; i++) {
      let lo = Infinity, hi = -Infinity;
      for (let b = -r; b <= r; b++) {
        for (let a = -r; a <= r; a++) {
          const v = img[(j + b) * n + i + a];
          lo = Math.min(lo, v);
          hi = Math.max(hi, v);
        }
      }
      out[j * n + i] = hi - lo <= tol ? 1 : 0;
    }
  }
  return out;
}
