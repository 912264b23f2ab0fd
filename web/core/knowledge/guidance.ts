// Which method to choose for a scan's truncation and what the user knows, with the figures the
// accuracy bench measured (`rimfill bench --only accuracy`; README "Choosing a method" shows the
// same table). The page shows it beside the truncation report; methods whose rows are not yet
// measured say so rather than guess.
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
 * The guidance table (FBP rows; the iterative and DBP rows join when their knowledge is measured).
 * Figures: inside-FOV RMSE (HU) from the accuracy bench at 360 views (the demo scan: 720) on the
 * default grid, each case's floor (FBP of the complete data) in brackets.
 */
export const GUIDANCE: GuidanceRow[] = [
  {
    severity: 'severe', knowledge: 'nothing', choose: 'FBP with water cylinder extension', command: '--method fbp --extend water',
    measured: 'NEMA thorax 151 [14], head 27 [9], thorax phantom 109 [44]',
    note: 'the smooth offset inside the field is not decided by the data (OS-SART, 20 iterations: 129, 369, 166): give a known region if you have one',
  },
  {
    severity: 'severe', knowledge: 'a known region', choose: 'FBP fitted to the region', command: '--method fbp --known x,y,r:HU',
    measured: 'NEMA thorax 29 [14], head 32 [9], thorax phantom 53 [44]',
    note: 'a value 20 HU off gives 32 to 41, 25 to 51, 52 to 60; with the field off the body\'s centre 38, 38, 96 (water: 96, 39, 81); two or more regions do better',
  },
  {
    severity: 'severe', knowledge: 'the outline', choose: 'FBP extended from the outline', command: '--method fbp --outline ellipse:cx,cy,a,b',
    measured: 'NEMA thorax 33 [14], head 95 [9], thorax phantom 78 [44]',
    note: 'the outline is filled with water: a skull is denser (head), arms left outside the ellipse are missed (thorax phantom); check the report\'s outline spread',
  },
  {
    severity: 'severe', knowledge: 'a known region and the outline', choose: 'FBP fitted to the region', command: '--method fbp --known x,y,r:HU --outline ...',
    measured: 'NEMA thorax 29 [14], head 32 [9], thorax phantom 53 [44]',
    note: 'the region decides; the outline is checked against the field and reported',
  },
  {
    severity: 'moderate', knowledge: 'nothing', choose: 'FBP with water cylinder extension', command: '--method fbp --extend water',
    measured: 'demo scan 105 [21]', note: 'OS-SART, 20 iterations: 273',
  },
  {
    severity: 'moderate', knowledge: 'a known region', choose: 'FBP fitted to the region', command: '--method fbp --known x,y,r:HU',
    measured: 'demo scan 49 [21]',
  },
  {
    severity: 'moderate', knowledge: 'the outline', choose: 'FBP extended from the outline', command: '--method fbp --outline ellipse:cx,cy,a,b',
    measured: 'demo scan 55 [21]',
  },
  {
    severity: 'moderate', knowledge: 'a known region and the outline', choose: 'FBP fitted to the region', command: '--method fbp --known x,y,r:HU --outline ...',
    measured: 'demo scan 49 [21]',
  },
];

/** The rows for a truncation class and what the user knows (mild and no truncation: FBP with water extension is enough). */
export function guidanceFor(c: TruncationClass, knowledge: KnownKind): GuidanceRow[] {
  const severity = c.severity === 'severe' ? 'severe' : 'moderate';
  return GUIDANCE.filter((r) => r.severity === severity && r.knowledge === knowledge);
}
