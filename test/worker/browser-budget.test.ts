// The page's default memory budget: half the device memory the browser reports
// (navigator.deviceMemory, in GiB: W3C Device Memory API), at most the 4 GiB one WebAssembly
// engine addresses (32-bit memories, WebAssembly core specification), 2 GiB when nothing is reported.
import { afterEach, describe, expect, it, vi } from 'vitest';
import { browserBudget } from '../../web/worker/browser-budget';

const GiB = 2 ** 30;

describe('the page\'s memory budget', () => {
  afterEach(() => {
    vi.unstubAllGlobals();
  });

  it('is half the memory the browser reports, and says so', () => {
    vi.stubGlobal('navigator', { deviceMemory: 4 });
    expect(browserBudget()).toEqual({ bytes: 2 * GiB, source: 'half of the 4 GiB the browser reports' });
  });

  it('never exceeds what one engine can address', () => {
    vi.stubGlobal('navigator', { deviceMemory: 16 });
    expect(browserBudget().bytes).toBe(4 * GiB);
  });

  it('falls back to 2 GiB when the browser reports nothing', () => {
    vi.stubGlobal('navigator', {});
    expect(browserBudget()).toEqual({ bytes: 2 * GiB, source: 'the default for a browser that does not report its memory' });
  });
});
