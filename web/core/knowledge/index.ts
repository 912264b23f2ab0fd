// Knowledge beyond the data: known regions and the object's outline.
export type { Knowledge, KnownCircle, KnownMask, KnownRegion, Outline } from './types';
export { validateKnowledge, polygonArea } from './validate';
export { describeOutline, describeRegion, knowledgePhrase } from './describe';
export { outlineContains, outlineMask, regionCoverage, type MaskInputs } from './raster';
export { huToMu, placeKnowledge, type KnowledgeContext, type PlacedKnowledge, type PlacedRegion } from './check';
export { parseKnown, parseOutline } from './parse';
