// The command line's demo end to end: the truncated thorax, each detector extension, and what a
// user knows (a region of known HU, the outline), judged against the phantom's truth, which is
// analytic (REFERENCES.md [thorax-phantom], [ellipse-projection]).
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, expect, it } from 'vitest';
import { demo } from '../../web/cli/commands/demo';

const dir = mkdtempSync(join(tmpdir(), 'rimfill-demo-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

type Figures = { regions: { insideFov: { rmse: number } }; residual: { relative: number } };

it('knowing a region or the outline lowers the error inside the field of view and the data residual below the water cylinder\'s', async () => {
  const r = await demo(['--dir', join(dir, 'out')]);
  const results = (r.json as { results: Record<string, Figures> }).results;
  const row = (start: string) => Object.entries(results).find(([name]) => name.startsWith(start))![1];
  const water = row('truncated scan: FBP, water cylinder');
  const complete = row('complete scan');
  for (const knowing of ['truncated scan: FBP, water cylinder, known region', 'truncated scan: FBP, outline']) {
    const k = row(knowing);
    expect(k.regions.insideFov.rmse, knowing).toBeLessThan(water.regions.insideFov.rmse);
    // Nothing beats FBP of the complete scan with the same noise: the floor.
    expect(k.regions.insideFov.rmse, knowing).toBeGreaterThan(complete.regions.insideFov.rmse);
    expect(k.residual.relative, knowing).toBeLessThanOrEqual(water.residual.relative);
  }
});
