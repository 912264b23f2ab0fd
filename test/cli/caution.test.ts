// The standing caution (both parts: research and quality work, not diagnosis; defer to local
// regulations and licensed clinical practice) in every place a user meets Rimfill from a
// terminal: `rimfill --help`, each `rimfill <command> --help`, and the `npm start` banner.
import { describe, expect, it } from 'vitest';
import { CAUTION } from '../../web/core/caution';
import { CAUTION as BANNER_CAUTION, startBanner } from '../../scripts/page-banner.mjs';
import { rimfill } from '../helpers/cli';

const COMMANDS = ['simulate', 'inspect', 'reconstruct', 'compare', 'export', 'calibrate', 'prior-check', 'bench', 'demo'];

function hasBothParts(text: string): void {
  expect(text).toMatch(/research and quality work, not for diagnosis/);
  expect(text).toMatch(/local regulations and licensed clinical practice/);
}

describe('the caution', () => {
  it('says both parts', () => hasBothParts(CAUTION));

  it('ends `rimfill --help` and every command help', () => {
    const top = rimfill(['--help']);
    expect(top.code).toBe(0);
    hasBothParts(top.stdout);
    for (const c of COMMANDS) {
      const r = rimfill([c, '--help']);
      expect(r.code, c).toBe(0);
      expect(r.stdout.trim().endsWith(CAUTION), c).toBe(true);
    }
  });

  it('closes the npm start banner, in the same words', () => {
    expect(BANNER_CAUTION).toBe(CAUTION);
    const lines = startBanner('http://127.0.0.1:5173/', 'file:///x/dist/index.html');
    expect(lines.at(-1)).toBe(CAUTION);
  });
});
