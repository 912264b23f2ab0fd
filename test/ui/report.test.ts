// The exported report: self-contained (no external resource), caution present, user text
// escaped, figures and recipe shown.
import { describe, expect, it } from 'vitest';
import type { Comparison } from '../../web/core/compare';
import { buildReport } from '../../web/ui/export/report';
import { huScaleText } from '../../web/ui/hu-calibration';
import { fileName } from '../../web/ui/export/download';
import { resultKnowledge } from '../../web/ui/logic/result-knowledge';

const comparison: Comparison = {
  unit: 'HU',
  regions: {
    image: { pixels: 100, rmse: 12.34, psnr: 30.04, ssim: 0.9876 },
    object: null,
    insideFov: { pixels: 50, rmse: 5.55, psnr: 35, ssim: 0.99 },
    outsideFov: null,
  },
  resampled: false,
  overlap: 1,
  fovRadiusMm: 100,
  notes: [],
  cupping: null,
};

const report = () => buildReport({
  title: 'Reconstructions of <b>scan</b>',
  scanName: 'a & b',
  scanSummary: 'Fan beam',
  huScale: huScaleText(0.02059, { method: 'region', at: 0, resultId: 'r', resultName: 'FBP <water>', region: { cx: 1, cy: -2, radius: 15 }, materialHu: 0, pixels: 700, stdHu: 4.2 }),
  referenceLabel: 'the ground truth',
  window: { width: 400, level: 40 },
  unit: 'HU',
  createdAt: new Date(Date.UTC(2026, 0, 2, 3, 4)),
  images: [{
    label: 'FBP "sharp"', colour: '#2f6fb0', png: 'data:image/png;base64,AAAA', recipe: { method: 'fbp' }, seconds: 1.25, warnings: ['w<1>'], metrics: comparison,
    residual: { rays: 10, rms: 0.0123, relative: 0.0456, bias: -0.001, maxAbs: 0.1, worstView: 7, worstViewRms: 0.05, perViewRms: [] },
  }],
});

describe('report', () => {
  it('is one self-contained document with the caution at the top and the bottom', () => {
    const html = report();
    expect(html.startsWith('<!doctype html>')).toBe(true);
    expect(html).toContain("default-src 'none'; img-src data:");
    expect(html).not.toMatch(/(src|href)="(https?:|\/\/)/);
    expect(html.match(/not for diagnosis/g)).toHaveLength(2);
  });

  it('escapes names and shows the figures, recipe and warnings', () => {
    const html = report();
    expect(html).toContain('Reconstructions of &lt;b&gt;scan&lt;/b&gt;');
    expect(html).toContain('FBP &quot;sharp&quot;');
    expect(html).toContain('a &amp; b');
    // The HU scale and how it was measured (the marked circle, its material and uniformity).
    expect(html).toMatch(/HU scale: mu of water 0\.020590 \/mm, measured in “FBP &lt;water&gt;”, .*: circle of 15\.0 mm at \(1\.0, -2\.0\) mm marked as 0 HU; SD 4\.2 HU over 700 pixels/);
    expect(huScaleText(undefined, undefined)).toBe('mu of water unknown: values in mu (1/mm)');
    expect(html).toContain('<td>12.3</td><td>30.0</td><td>0.988</td>');
    expect(html).toContain('<td>5.5</td><td>35.0</td><td>0.990</td><td>–</td>');
    expect(html).toContain('{&quot;method&quot;:&quot;fbp&quot;}');
    // Each recipe's truncation correction in words, whatever the result was named.
    expect(html).toContain('<th scope="row">FBP &quot;sharp&quot;</th><td class="left">no correction</td>');
    expect(html).toContain('w&lt;1&gt;');
    expect(html).toContain('2026-01-02 03:04');
    expect(html).toContain('Agreement with the measured data');
    expect(html).toContain('<td>4.6%</td><td>0.0123</td><td>-0.00100</td><td>7</td>');
  });

  it('names the knowledge each result used, with each region before and after and the residual, from the run or its recipe', () => {
    const known = { shape: 'circle' as const, x: 4, y: 30, r: 10, hu: 44, label: 'heart <1>' };
    const recipe = { method: 'fbp', extend: 'water', knowledge: { known: [known], outline: { shape: 'ellipse', cx: 0, cy: 0, a: 170, b: 120 } } };
    const ran = resultKnowledge({
      recipe,
      report: { knowledge: { used: ['known region 1 "heart <1>" (circle at 4, 30 mm, r 10 mm, 44 HU)', 'outline (ellipse at 0, 0 mm, semi-axes 170 x 120 mm)'],
        regions: [{ name: 'known region 1 "heart <1>" (circle at 4, 30 mm, r 10 mm, 44 HU)', knownHu: 44, beforeHu: -61.4, afterHu: 43.6 }],
        residual: { before: { rms: 0.01, relative: 0.0123, bias: 0 }, after: { rms: 0.011, relative: 0.0125, bias: 0 } } } },
    })!;
    // A result whose report says nothing of its knowledge is named from its recipe alone.
    expect(resultKnowledge({ recipe, report: {} })).toEqual({ used: ran.used, regions: [] });
    expect(resultKnowledge({ recipe: { method: 'fbp' }, report: {} })).toBeUndefined();
    const html = buildReport({
      title: 't', scanName: 's', scanSummary: '', referenceLabel: 'the ground truth', window: { width: 400, level: 40 }, unit: 'HU', createdAt: new Date(0),
      images: [{ label: 'FBP, water cylinder, 1 known region + outline', colour: '#2f6fb0', png: 'data:image/png;base64,AAAA', recipe, warnings: [], knowledge: ran }],
    });
    expect(html).toContain('<h2>Knowledge beyond the data</h2>');
    expect(html).toContain('<li>known region 1 &quot;heart &lt;1&gt;&quot; (circle at 4, 30 mm, r 10 mm, 44 HU)</li><li>outline (ellipse at 0, 0 mm, semi-axes 170 x 120 mm)</li>');
    expect(html).toContain('<td>44</td><td>-61</td><td>44</td>');
    expect(html).toContain('Residual against the measured data: 1.23% with the correction alone, 1.25% with the knowledge.');
    expect(report()).not.toContain('Knowledge beyond the data');
  });

  it('file names keep only safe characters', () => {
    expect(fileName('FBP, ramp, 576 px × 1 mm', 'nrrd')).toBe('FBP-ramp-576-px-1-mm.nrrd');
    expect(fileName('///', 'png')).toBe('rimfill.png');
  });
});
