// The guidance table and the accuracy bench's rows: every row is a valid recipe for every kind
// of knowledge it lists, and a truncation report is classed as the README's table describes it.
import { describe, expect, it } from 'vitest';
import { ACCURACY_ROWS, knowledgeFor, KNOWLEDGE_KINDS, selectRows, WRONG_KNOWLEDGE } from '../../web/cli/bench/accuracy/rows';
import { bench } from '../../web/cli/commands/bench';
import { InputError } from '../../web/core/errors';
import type { SevereCase } from '../../web/cli/bench/accuracy/cases';
import { classifyTruncation, GUIDANCE, guidanceFor } from '../../web/core/knowledge/guidance';
import { validateRecipe } from '../../web/core/recipe/recipe';
import type { TruncationSummary } from '../../web/core/truncation/detect';
import { parseArgs } from '../../web/cli/args';

// Stand-in knowledge (only its shape matters here).
const c = {
  known: { shape: 'circle', x: 0, y: 0, r: 10, hu: 40 },
  outline: { shape: 'ellipse', cx: 0, cy: 0, a: 170, b: 120 },
  hull: { shape: 'polygon', points: [[-200, -130], [200, -130], [200, 130], [-200, 130]] },
} as unknown as SevereCase;

describe('the accuracy bench rows', () => {
  it('each row gives a valid recipe for each kind of knowledge it runs with, and the wrong kinds change what they say', () => {
    for (const row of ACCURACY_ROWS) {
      for (const kind of row.kinds) expect(() => validateRecipe(row.recipe(knowledgeFor(c, kind))), `${row.label} / ${kind}`).not.toThrow();
    }
    expect(KNOWLEDGE_KINDS).toContain('none');
    expect(knowledgeFor(c, 'region +20 HU')!.known![0].hu).toBe(60);
    expect(knowledgeFor(c, 'outline +10 mm')!.outline).toMatchObject({ a: 180, b: 130 });
    expect(knowledgeFor(c, 'outline: hull')!.outline!.shape).toBe('polygon');
    expect(WRONG_KNOWLEDGE.length).toBeGreaterThan(2);
  });

  it('the iterative methods have rows with every kind of knowledge, and --rows picks rows by words of their labels', async () => {
    for (const method of ['sart', 'tv', 'wtv', 'prior']) {
      const kinds = ACCURACY_ROWS.filter((r) => (r.recipe(undefined) as { method: string }).method === method).flatMap((r) => r.kinds);
      expect(new Set(kinds), method).toEqual(new Set(KNOWLEDGE_KINDS));
    }
    expect(selectRows().length).toBe(ACCURACY_ROWS.length);
    expect(selectRows(['os-sart', 'PRIOR']).map((r) => r.label)).toEqual(['OS-SART', 'prior-guided, default prior']);
    await expect(bench(['--rows', 'nothing-like-this'])).rejects.toThrow(InputError);
    await expect(bench(['--rows', 'nothing-like-this'])).rejects.toThrow(/option --rows: got "nothing-like-this", expected words from the accuracy rows' labels: FBP, no extension;/);
  });
});

describe('the guidance table', () => {
  const summary = (fov: number, object: number, left: number, right: number): TruncationSummary => ({
    truncatedFraction: Math.max(left, right), leftFraction: left, rightFraction: right, worstSide: 'left',
    maxExtentMm: { left: 0, right: 0 }, meanExtentMm: { left: 0, right: 0 }, objectDiameterMm: object, objectRadiusMm: object / 2, fovDiameterMm: fov,
  });

  it('classes a scan by the FOV against the estimated object and by the sides cut off', () => {
    expect(classifyTruncation(summary(142, 340, 1, 1))).toMatchObject({ severity: 'severe', sides: 'both' });
    expect(classifyTruncation(summary(204, 340, 1, 1))).toMatchObject({ severity: 'moderate', sides: 'both' });
    expect(classifyTruncation(summary(300, 340, 1, 0))).toMatchObject({ severity: 'mild', sides: 'one' });
    expect(classifyTruncation(summary(400, 340, 0, 0))).toMatchObject({ severity: 'none', sides: 'none' });
  });

  it('has a measured row for each kind of knowledge on severe truncation', () => {
    for (const k of ['nothing', 'a known region', 'the outline', 'a known region and the outline'] as const) {
      const rows = guidanceFor({ severity: 'severe', sides: 'both', fovFraction: 0.42 }, k);
      expect(rows.length, k).toBeGreaterThan(0);
      for (const r of rows) expect(r.measured).toMatch(/\d+ \[\d+\]/);
    }
    expect(GUIDANCE.every((r) => r.command.startsWith('--method'))).toBe(true);
  });

  it('names what TV reached from each FBP choice (the figures of the iterative methods, in the note)', () => {
    const fbpRows = GUIDANCE.filter((r) => r.choose.startsWith('FBP'));
    expect(fbpRows.length).toBeGreaterThanOrEqual(8);
    for (const r of fbpRows) expect(r.note, `${r.severity} / ${r.knowledge}`).toMatch(/TV from it(, holding the region)?(: | \(--method tv[^)]*\): )\d+/);
  });
});

describe('repeatable options', () => {
  it('collects a repeated --known in order and still refuses other repeats', () => {
    const a = parseArgs(['--known', '1,2,3:0', '--known', 'm.nrrd:40', '--out', 'x'], { known: 'strings', out: 'string' }, 0);
    expect(a.options.known).toEqual(['1,2,3:0', 'm.nrrd:40']);
    expect(() => parseArgs(['--out', 'a', '--out', 'b'], { out: 'string' }, 0)).toThrow(/given twice/);
  });
});
