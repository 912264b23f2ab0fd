// A small test harness for the browser tests: named steps, each passing or failing with a
// reason, a summary line "N passed, N failed", and checks that say what was expected.

export class Harness {
  constructor() {
    this.passed = 0;
    this.failed = 0;
    this.failures = [];
  }

  /** Runs one named step; a thrown error fails it. Later steps still run. */
  async step(name, fn) {
    const t0 = Date.now();
    try {
      await fn();
      this.passed++;
      console.log(`  ok   ${name} (${((Date.now() - t0) / 1000).toFixed(1)} s)`);
      return true;
    } catch (err) {
      this.failed++;
      this.failures.push(`${name}: ${err?.message ?? err}`);
      console.log(`  FAIL ${name}\n       ${String(err?.stack ?? err).split('\n').slice(0, 6).join('\n       ')}`);
      return false;
    }
  }

  /** Prints the summary; returns the process exit code. */
  finish() {
    if (this.failures.length) console.log(`\nFailures:\n${this.failures.map((f) => `  - ${f}`).join('\n')}`);
    console.log(`\n${this.passed} passed, ${this.failed} failed`);
    return this.failed ? 1 : 0;
  }
}

/** Throws unless `cond`, with the message. */
export function check(cond, message) {
  if (!cond) throw new Error(message);
}

/** Throws unless |actual - expected| <= tol. */
export function near(actual, expected, tol, what) {
  if (!(Math.abs(actual - expected) <= tol)) throw new Error(`${what}: got ${actual}, expected ${expected} ± ${tol}`);
}
