// Which method to choose for a scan's truncation and what the user knows, with the figures the
// accuracy bench measured (`rimfill bench --only accuracy`; README "Choosing a method" shows the
// same table), as data for the page's truncation report; methods whose rows are not yet measured
// say so rather than guess.
import type { TruncationSummary } from '../truncation/detect';

/** How much of the object the scan cuts off: FOV radius against the estimated object's half-width. */
export type Severity = 'none' | 'mild' | 'moderate' | 'severe';
/** What the user knows. */
export type KnownKind = 'nothing' | 'a known region' | 'the outline' | 'a known region and the outline';

export interface TruncationClass {
  severity: Severity;
  /** Cut off on both sides in most views, on one side only, or not at all. */
  sides: 'both' | 'one' | 'none';
  /** FOV radius / the object's estimated half-width. */
  fovFraction: number;
}

export interface GuidanceRow {
  severity: Exclude<Severity, 'none' | 'mild'>;
  knowledge: KnownKind;
  /** The choice in words and on the command line. */
  choose: string;
  command: string;
  /** Inside-FOV RMSE per bench case (HU), and the complete-data floor beside it. */
  measured: string;
  note?: string;
}

/** Severe below half the half-width (the C-arm cases measure 0.42), moderate below 0.8 (the demo scan, 0.6). */
const SEVERE = 0.5, MODERATE = 0.8;

/** The class of a scan's truncation report. */
export function classifyTruncation(s: TruncationSummary): TruncationClass {
  const fovFraction = s.objectDiameterMm > 0 ? s.fovDiameterMm / s.objectDiameterMm : 1;
  const both = Math.min(s.leftFraction, s.rightFraction) >= 0.5;
  const sides = s.truncatedFraction === 0 ? 'none' : both ? 'both' : 'one';
  const severity: Severity = s.truncatedFraction === 0 ? 'none' : fovFraction < SEVERE ? 'severe' : fovFraction < MODERATE ? 'moderate' : 'mild';
  return { severity, sides, fovFraction };
}

/**
 * The guidance table: for each class and what the user knows, the FBP choice (with, in its note,
 * what TV (ASD-POCS, 20 iterations, starting from that choice: the best iterative row on most
 * cases) and the other iterative methods reached on the same data) and the DBP rows (README
 * "Choosing a method" has every figure). Figures: inside-FOV RMSE (HU) from the accuracy bench
 * at 360 views (the demo scan: 720) on the default grid, each case's floor (FBP of the complete
 * data) in brackets. Where two rows share a cell, their notes say on which cases each is ahead.
 * The iterative methods take 10 to 100 s where FBP takes about 1 s on the bench's 512 x 512 grid.
 */
export const GUIDANCE: GuidanceRow[] = [
  {
    severity: 'severe', knowledge: 'nothing', choose: 'FBP with water cylinder extension', command: '--method fbp --extend water',
    measured: 'NEMA thorax 151 [14], head 27 [9], thorax phantom 109 [44]',
    note: 'the smooth offset inside the field is not decided by the data: give a known region if you have one. TV from it (--method tv): 147, 26, 101, a few HU better (OS-SART 148, 28, 104; reweighted TV and prior-guided 147, 26, 102)',
  },
  {
    severity: 'severe', knowledge: 'a known region', choose: 'FBP fitted to the region', command: '--method fbp --known x,y,r:HU',
    measured: 'NEMA thorax 29 [14], head 32 [9], thorax phantom 53 [44]',
    note: 'a value 20 HU off gives 32 to 41, 25 to 51, 52 to 60; with the field off the body\'s centre 38, 38, 96 (water: 96, 39, 81); two or more regions do better. TV from it, holding the region (--method tv --known ...): 27, 25, 47 (OS-SART 28, 27, 53; reweighted TV and prior-guided 27, 25, 49)',
  },
  {
    severity: 'severe', knowledge: 'the outline', choose: 'FBP extended from the outline', command: '--method fbp --outline ellipse:cx,cy,a,b',
    measured: 'NEMA thorax 33 [14], head 95 [9], thorax phantom 78 [44]',
    note: 'the outline is filled with water: a skull is denser (head), arms left outside the ellipse are missed (thorax phantom); check the report\'s outline spread. TV from it: 32, 90, 73; reweighted TV with the outline as the support (--support outline) 23, 95, 79, only where the outline holds everything in the beam',
  },
  {
    severity: 'severe', knowledge: 'a known region and the outline', choose: 'FBP fitted to the region', command: '--method fbp --known x,y,r:HU --outline ...',
    measured: 'NEMA thorax 29 [14], head 32 [9], thorax phantom 53 [44]',
    note: 'the region decides; the outline is checked against the field and reported. TV from it, holding the region: 27, 25, 47; reweighted TV with the outline as the support 24, 27, 46',
  },
  {
    severity: 'severe', knowledge: 'a known region', choose: 'DBP through the region (field of view only)', command: '--method dbp --known x,y,r:HU',
    measured: 'NEMA thorax 48 [14], head 20 [9], thorax phantom 37 [44]',
    note: 'ahead of FBP fitted to the region on the head and the thorax phantom, behind it on the NEMA thorax; a value 20 HU off gives 48 to 58, 19 to 34, 35 to 45; the rest of the image is marked as not determined (--undetermined), not filled; 1 to 5 s',
  },
  {
    severity: 'severe', knowledge: 'a known region and the outline', choose: 'DBP through the region, bounded by the outline', command: '--method dbp --known x,y,r:HU --outline ...',
    measured: 'NEMA thorax 54 [14], head 18 [9], thorax phantom 42 [44]',
    note: 'the outline bounds the chords: the best figure on the head; where the ellipse leaves out part of the object (arms) the region alone does better (thorax phantom 37, NEMA thorax 48); the field of view only, the rest marked as not determined',
  },
  {
    severity: 'moderate', knowledge: 'nothing', choose: 'FBP with water cylinder extension', command: '--method fbp --extend water',
    measured: 'demo scan 105 [21]', note: 'TV from it: 102 (OS-SART 103, reweighted TV and prior-guided 102)',
  },
  {
    severity: 'moderate', knowledge: 'a known region', choose: 'FBP fitted to the region', command: '--method fbp --known x,y,r:HU',
    measured: 'demo scan 49 [21]', note: 'TV from it, holding the region: 48 (OS-SART 50, reweighted TV and prior-guided 48)',
  },
  {
    severity: 'moderate', knowledge: 'the outline', choose: 'FBP extended from the outline', command: '--method fbp --outline ellipse:cx,cy,a,b',
    measured: 'demo scan 55 [21]', note: 'TV from it: 53 (OS-SART 55, reweighted TV 53; with the outline as the support 51, though the data disagree with it: the arms lie outside)',
  },
  {
    severity: 'moderate', knowledge: 'a known region and the outline', choose: 'FBP fitted to the region', command: '--method fbp --known x,y,r:HU --outline ...',
    measured: 'demo scan 49 [21]', note: 'TV from it, holding the region: 48; reweighted TV with the outline as the support 45, though the data disagree with it',
  },
  {
    severity: 'moderate', knowledge: 'a known region', choose: 'DBP through the region (field of view only)', command: '--method dbp --known x,y,r:HU',
    measured: 'demo scan 49 [21]', note: 'level with FBP fitted to the region here; the rest of the image is marked as not determined',
  },
  {
    severity: 'moderate', knowledge: 'a known region and the outline', choose: 'DBP through the region, bounded by the outline', command: '--method dbp --known x,y,r:HU --outline ...',
    measured: 'demo scan 74 [21]', note: 'behind FBP fitted to the region and DBP with the region alone (49) here: the ellipse leaves out the arms',
  },
];

/** The rows for a truncation class and what the user knows (mild and no truncation: FBP with water extension is enough). */
export function guidanceFor(c: TruncationClass, knowledge: KnownKind): GuidanceRow[] {
  const severity = c.severity === 'severe' ? 'severe' : 'moderate';
  return GUIDANCE.filter((r) => r.severity === severity && r.knowledge === knowledge);
}
