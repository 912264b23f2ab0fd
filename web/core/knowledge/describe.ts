// Words for knowledge items in messages, reports and result labels.
import type { Knowledge, KnownRegion, Outline } from './types';

const mm = (v: number) => `${Number(v.toFixed(1))}`;

/** "known region 2 (circle at 10, -20 mm, r 8 mm, -1000 HU)". */
export function describeRegion(region: KnownRegion, index: number): string {
  const what = region.shape === 'circle'
    ? `circle at ${mm(region.x)}, ${mm(region.y)} mm, r ${mm(region.r)} mm${region.z ? `, z ${mm(region.z[0])} to ${mm(region.z[1])} mm` : ''}`
    : `mask ${region.input}`;
  return `known region ${index + 1}${region.label ? ` "${region.label}"` : ''} (${what}, ${region.hu} HU)`;
}

/** "outline (ellipse at 0, 0 mm, semi-axes 170 x 120 mm)". */
export function describeOutline(outline: Outline): string {
  switch (outline.shape) {
    case 'ellipse':
      return `outline (ellipse at ${mm(outline.cx)}, ${mm(outline.cy)} mm, semi-axes ${mm(outline.a)} x ${mm(outline.b)} mm${outline.angleDeg ? `, turned ${mm(outline.angleDeg)} degrees` : ''})`;
    case 'polygon':
      return `outline (polygon of ${outline.points.length} points)`;
    case 'mask':
      return `outline (mask ${outline.input})`;
  }
}

/** A short phrase for labels: "2 known regions + outline", "" when nothing is known. */
export function knowledgePhrase(k: Knowledge | undefined): string {
  const parts: string[] = [];
  const n = k?.known?.length ?? 0;
  if (n) parts.push(n === 1 ? '1 known region' : `${n} known regions`);
  if (k?.outline) parts.push('outline');
  return parts.join(' + ');
}
