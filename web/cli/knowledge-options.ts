// What the user knows, on the command line of `rimfill reconstruct` (README "Command line"):
//   --known x,y,r:HU | x,y,r,z0,z1:HU | mask.nrrd:HU   (repeatable)
//   --outline ellipse:cx,cy,a,b[,angle] | mask.nrrd
// and the lines the report prints about it.
import { existsSync } from 'node:fs';
import { InputError } from '../core/errors';
import type { Image2D } from '../core/image';
import { parseKnown, parseOutline, type MaskInputs } from '../core/knowledge';
import type { Recipe } from '../core/recipe/recipe';
import type { KnowledgeReport } from '../core/recipe/knowledge-report';
import type { Scan } from '../core/scan';
import type { Volume } from '../core/volume';
import type { OptionType, ParsedArgs } from './args';
import { loadImageOrVolume } from './load';

export const KNOWLEDGE_OPTIONS: Record<string, OptionType> = { known: 'strings', outline: 'string' };

export const KNOWLEDGE_HELP = `  what you know (FBP adjusts its detector extension to it; see README "Choosing a method"):
    [--known x,y,r:HU]... a disc of known value (centre and radius in mm, image frame), repeatable;
                          x,y,r,z0,z1:HU a cylinder over z0..z1 mm (cone beam); mask.nrrd:HU a mask
    [--outline ellipse:cx,cy,a,b[,angle] | mask.nrrd]  the object's outline (nothing but air outside)
    [--extend outline]    tails that carry the mass of the outline filled with water (the default
                          with --outline alone; with --known the regions decide, --extend water)
  A known region must lie inside the measured field of view; one of at most 20 mm in uniform
  tissue (fat, muscle, blood, air in the trachea) is enough. --json reports each region's value
  before and after and the measured-data residual before and after.`;

const isFile = (name: string) => existsSync(name);

/** Sets recipe.knowledge from --known / --outline; with fbp and no --extend, the extension they adjust. */
export function addKnowledgeFields(raw: Record<string, unknown>, a: ParsedArgs): void {
  const known = (a.options.known as string[] | undefined) ?? [];
  const outlineText = a.options.outline as string | undefined;
  if (!known.length && outlineText === undefined) return;
  const knowledge: Record<string, unknown> = {};
  if (known.length) knowledge.known = known.map((k) => parseKnown(k, isFile));
  if (outlineText !== undefined) knowledge.outline = parseOutline(outlineText, isFile);
  raw.knowledge = knowledge;
  if (raw.method === 'fbp' && raw.extend === undefined) raw.extend = known.length ? 'water' : 'outline';
}

/** Mask images the knowledge names, read as mu-independent masks (values > 0.5 inside). */
export async function knowledgeMasks(recipe: Recipe, scan: Scan): Promise<MaskInputs | undefined> {
  const names = new Set<string>();
  for (const r of recipe.knowledge?.known ?? []) if (r.shape === 'mask') names.add(r.input);
  if (recipe.knowledge?.outline?.shape === 'mask') names.add(recipe.knowledge.outline.input);
  if (!names.size) return undefined;
  const masks: MaskInputs = {};
  for (const name of names) {
    const m = await loadImageOrVolume(name, `mask ${name}`, scan.muWater);
    const img: Image2D | Volume | undefined = m.volume ?? m.image;
    if (!img) throw new InputError(`mask ${name}: the file holds no image`);
    masks[name] = img;
  }
  return masks;
}

const huText = (v: number) => ` ${v.toFixed(0)} HU`;

/** Lines for the text report of a reconstruction that used knowledge. */
export function knowledgeLines(k: KnowledgeReport, baseMethod: string): string[] {
  const lines = k.regions.map((r) => `${r.name}: FBP + ${baseMethod} alone${huText(r.beforeHu)}, with what you know${huText(r.afterHu)}`);
  const c = k.completion;
  if ('prior' in c) lines.push(`tails fitted to ${c.momentsFrom}: object mass ${c.prior.mass.toFixed(0)} -> ${c.moments.mass.toFixed(0)} (line integral x mm), mean stretch ${c.stretch.mean.toFixed(2)}`);
  else lines.push(`tails of every detector row fitted to ${c.momentsFrom}: row mass ${c.massRatio.min.toFixed(2)} to ${c.massRatio.max.toFixed(2)} times the first estimate, mean stretch ${c.stretch.mean.toFixed(2)}`);
  const pct = (x: number) => `${(100 * x).toFixed(2)}%`;
  lines.push(`measured-data residual: ${pct(k.residual.before.relative)} with FBP + ${baseMethod} alone, ${pct(k.residual.after.relative)} with what you know`);
  if (k.suggestedOutline) lines.push(`the data suggest the outline --outline ${k.suggestedOutline.option} (check it against the object)`);
  return lines;
}
