// FBP of exact projections of the original Shepp-Logan phantom (Shepp & Logan 1974, Table 1) in
// every geometry; the higher-contrast variant runs in the fast tier (fbp.test.ts).
import { describe, it } from 'vitest';
import { expectSheppLoganRegions, geometries } from '../helpers/fbp-cases';

describe('FBP of exact Shepp-Logan projections', () => {
  it.each(geometries)('%s, original: every region within 2 percent of the table value', (_, g) => expectSheppLoganRegions(g, 'original'));
});
