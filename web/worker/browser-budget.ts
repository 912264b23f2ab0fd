// The page's default memory budget, from what the browser reports about the device.

/** The engine's largest memory (a 32-bit WebAssembly address space). */
const ENGINE_LIMIT = 4 * 2 ** 30;

/**
 * Half the device memory the browser reports (navigator.deviceMemory, in GiB, which browsers
 * round down and cap at 8), else 2 GiB; at most the engine's 4 GiB.
 */
export function browserBudget(): { bytes: number; source: string } {
  const gib = (globalThis.navigator as { deviceMemory?: number } | undefined)?.deviceMemory;
  if (typeof gib === 'number' && gib > 0) {
    return { bytes: Math.min(ENGINE_LIMIT, (gib / 2) * 2 ** 30), source: `half of the ${gib} GiB the browser reports` };
  }
  return { bytes: 2 * 2 ** 30, source: 'the default for a browser that does not report its memory' };
}
