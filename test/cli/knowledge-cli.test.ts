// rimfill reconstruct with what the user knows (--known, --outline, --extend outline): the
// report (each region before and after, the measured-data residual before and after, the outline
// the data suggest), and bad input: one line naming the region, exit 2, nothing written.
import { existsSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { reconstruct } from '../../web/cli/commands/reconstruct';
import { simulate } from '../../web/cli/commands/simulate';
import { writeImageNrrd } from '../../web/core/formats/image-nrrd';
import { squareGrid, gridOrigin } from '../../web/core/image';
import type { KnowledgeReport } from '../../web/core/recipe/knowledge-report';
import { rimfill } from '../helpers/cli';

let dir: string;
const f = (name: string) => join(dir, name);

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'rimfill-known-'));
  // A C-arm-like fan (R 750, D 1200 mm) whose 150 channels of 1 mm see the thorax phantom
  // (340 mm wide) within a radius of about 46 mm: severe truncation on both sides.
  writeFileSync(f('geom.json'), JSON.stringify({
    kind: 'fan', detector: { shape: 'flat', channels: 150, rows: 1, pitch: [1, 1], offset: [0, 0] },
    sourceIsocenter: 750, sourceDetector: 1200, anglesDeg: { start: 0, step: 3, count: 120 },
  }));
  await simulate(['--phantom', 'thorax', '--geometry', f('geom.json'), '--out', f('scan.nrrd')]);
  // A mask of a 10 mm disc around (4, 30) mm (the heart, muscle) on a grid of its own.
  const g = squareGrid(64, 1);
  const { x0, y0 } = gridOrigin(g);
  const data = new Float32Array(64 * 64).map((_, q) => (Math.hypot(x0 + (q % 64) - 4, y0 + Math.floor(q / 64) - 30) <= 10 ? 1 : 0));
  writeFileSync(f('heart.nrrd'), await writeImageNrrd({ grid: g, data, quantity: 'mu' }));
  writeFileSync(f('empty.nrrd'), await writeImageNrrd({ grid: g, data: new Float32Array(64 * 64), quantity: 'mu' }));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const common = ['--size', '128', '--pixel', '4', '--workers', '1'];

describe('rimfill reconstruct --known / --outline', () => {
  it('a known disc: water extension by default, the disc before and after, the residual before and after', async () => {
    const r = await reconstruct([f('scan.nrrd'), '--method', 'fbp', '--known', '4,30,10:43', ...common, '--out', f('known.nrrd'), '--json']);
    const json = r.json as { recipe: Record<string, unknown>; report: { knowledge: KnowledgeReport } };
    expect(json.recipe).toMatchObject({ method: 'fbp', extend: 'water', knowledge: { known: [{ shape: 'circle', x: 4, y: 30, r: 10, hu: 43 }] } });
    const k = json.report.knowledge;
    expect(k.used[0]).toMatch(/^known region 1 \(circle at 4, 30 mm, r 10 mm, 43 HU\)/);
    expect(Math.abs(k.regions[0].afterHu - 43)).toBeLessThan(3);
    expect(Number.isFinite(k.regions[0].beforeHu)).toBe(true);
    expect(k.residual.before.rms).toBeGreaterThan(0);
    expect(k.residual.after.rms).toBeGreaterThan(0);
    expect(k.suggestedOutline?.option).toMatch(/^ellipse:/);
    expect(r.text).toMatch(/known region 1 .*: FBP \+ water alone -?\d+ HU, with what you know 4\d HU/);
    expect(r.text).toMatch(/measured-data residual: [\d.]+% with FBP \+ water alone, [\d.]+% with what you know/);
    expect(existsSync(f('known.nrrd'))).toBe(true);
  });

  it('repeated --known and a mask region; --outline alone extends from the outline', async () => {
    const r = await reconstruct([f('scan.nrrd'), '--method', 'fbp', '--known', '4,30,8:43', '--known', `${f('heart.nrrd')}:43`, ...common, '--out', f('two.nrrd'), '--json']);
    const k = (r.json as { report: { knowledge: KnowledgeReport } }).report.knowledge;
    expect(k.regions).toHaveLength(2);
    expect(k.used[1]).toMatch(/mask .*heart\.nrrd/);
    const o = await reconstruct([f('scan.nrrd'), '--method', 'fbp', '--outline', 'ellipse:0,0,170,120', ...common, '--out', f('outline.nrrd'), '--json']);
    const jo = o.json as { recipe: Record<string, unknown>; report: { extension: { method: string }; knowledge: KnowledgeReport } };
    expect(jo.recipe).toMatchObject({ extend: 'outline', knowledge: { outline: { shape: 'ellipse', cx: 0, cy: 0, a: 170, b: 120 } } });
    expect(jo.report.extension.method).toBe('outline');
    expect(jo.report.knowledge.completion.momentsFrom).toBe('outline');
  });
});

describe('rimfill reconstruct: bad knowledge is refused with one line, exit 2, nothing written', () => {
  const bad: Array<[string, string[], RegExp]> = [
    ['a region outside the measured field', ['--known', '80,0,10:0'], /known region 1 \(circle at 80, 0 mm.*outside the measured field of view/],
    ['a region outside the grid', ['--known', '900,0,10:0'], /known region 1 .*covers no pixel of the reconstruction grid/],
    ['a region over no data (an empty mask)', ['--known', 'EMPTY:0'], /known region 1 \(mask .*empty\.nrrd.*covers no pixel/],
    ['an outline smaller than the measured field', ['--outline', 'ellipse:0,0,30,20'], /outline \(ellipse .*of the measured field of view lies outside it where the data show the object.*must enclose the object/],
    ['contradictory regions', ['--known', '0,0,10:0', '--known', '5,0,10:60'], /known region 1 .* and known region 2 .* contradict each other/],
    ['a malformed region', ['--known', '0,0:10'], /--known "0,0:10": got "0,0", expected 3 or 5 numbers/],
    ['extend outline without an outline', ['--extend', 'outline', '--known', '0,0,5:0'], /option --extend: got "outline".*give the outline too/],
    ['known regions with no extension to adjust', ['--extend', 'none', '--known', '0,0,5:0'], /recipe extend: got "none"/],
  ];
  it.each(bad)('%s', (_, args, message) => {
    const out = f(`bad-${Math.random().toString(36).slice(2)}.nrrd`);
    const a = args.map((x) => x.replace('EMPTY', f('empty.nrrd')));
    const r = rimfill(['reconstruct', f('scan.nrrd'), '--method', 'fbp', ...a, ...common, '--out', out]);
    expect(r.code).toBe(2);
    expect(r.stderr.trim().split('\n')).toHaveLength(1);
    expect(r.stderr).toMatch(message);
    expect(existsSync(out)).toBe(false);
  });
});
