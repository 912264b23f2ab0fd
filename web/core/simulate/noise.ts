// Reproducible photon noise: I ~ Poisson(I0 exp(-p)), p_hat = -ln(max(I, 1) / I0)
// (standard transmission model, REFERENCES.md [transmission-noise]).

/** Seeded 32-bit generator (mulberry32, public-domain, common practice); uniform in [0, 1). */
export function seededRandom(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** log(k!) by Stirling's series for k >= 10, exact sums below (common numerical practice). */
function logFactorial(k: number): number {
  if (k < 10) {
    let s = 0;
    for (let i = 2; i <= k; i++) s += Math.log(i);
    return s;
  }
  const x = k + 1;
  return (x - 0.5) * Math.log(x) - x + 0.5 * Math.log(2 * Math.PI) + 1 / (12 * x) - 1 / (360 * x ** 3) + 1 / (1260 * x ** 5);
}

/**
 * A Poisson sample with mean lam. Small means: Knuth's multiplication method (D. E. Knuth, The
 * Art of Computer Programming vol. 2, 3.4.1). Large means: transformed rejection with squeeze,
 * PTRS (W. Hormann, "The transformed rejection method for generating Poisson random
 * variables", Insurance: Mathematics and Economics 12:39-45, 1993; constants from memory).
 */
export function poisson(lam: number, rand: () => number): number {
  if (lam <= 0) return 0;
  if (lam < 10) {
    const l = Math.exp(-lam);
    let k = 0;
    let p = rand();
    while (p > l) {
      k++;
      p *= rand();
    }
    return k;
  }
  const slam = Math.sqrt(lam);
  const loglam = Math.log(lam);
  const b = 0.931 + 2.53 * slam;
  const a = -0.059 + 0.02483 * b;
  const invalpha = 1.1239 + 1.1328 / (b - 3.4);
  const vr = 0.9277 - 3.6224 / (b - 2);
  for (;;) {
    const U = rand() - 0.5;
    const V = rand();
    const us = 0.5 - Math.abs(U);
    const k = Math.floor(((2 * a) / us + b) * U + lam + 0.43);
    if (us >= 0.07 && V <= vr) return k;
    if (k < 0 || (us < 0.013 && V > us)) continue;
    if (Math.log(V) + Math.log(invalpha) - Math.log(a / (us * us) + b) <= -lam + k * loglam - logFactorial(k)) return k;
  }
}

/**
 * Adds photon noise to line integrals in place: `photons` incident photons per detector
 * element (I0), seeded. Returns how many readings had zero counts (clamped to 1 count).
 */
export function addPhotonNoise(lineIntegrals: Float32Array, photons: number, seed: number): { zeroCounts: number } {
  const rand = seededRandom(seed);
  let zeroCounts = 0;
  for (let i = 0; i < lineIntegrals.length; i++) {
    const counts = poisson(photons * Math.exp(-lineIntegrals[i]), rand);
    if (counts < 1) zeroCounts++;
    lineIntegrals[i] = -Math.log(Math.max(counts, 1) / photons);
  }
  return { zeroCounts };
}
