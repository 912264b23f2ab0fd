// The method guidance as the page shows it: the scan's truncation in one line (how much of the
// object the field of view covers, which sides are cut off, how far the object reaches), what
// the user has given, and the guidance table (core/knowledge/guidance.ts, the accuracy bench's
// figures) as one row per kind of knowledge and choice, with the figures of every truncation the
// bench measured beside it: the one nearest the scan's is marked, the others stay in view (the
// scan's own estimate of the object's width is rough, and arms count in it). The row for the
// user's knowledge is marked. It adds no figure of its own.
import { classifyTruncation, GUIDANCE, type GuidanceRow, type KnownKind, type TruncationClass } from '../../core/knowledge/guidance';
import type { TruncationSummary } from '../../core/truncation/detect';

/** The figures of one measured truncation for a choice. */
export interface MeasuredFigures {
  severity: GuidanceRow['severity'];
  /** Which cases, in words. */
  cases: string;
  measured: string;
  note?: string;
  /** The measured truncation nearest the scan's. */
  nearest: boolean;
}

export interface GuidanceChoice {
  knowledge: KnownKind;
  choose: string;
  figures: MeasuredFigures[];
  /** The user has given this kind of knowledge. */
  yours: boolean;
}

export interface GuidanceView {
  truncation: TruncationClass;
  /** The scan's truncation in one line. */
  scan: string;
  /** What the user has given, in one line. */
  given: string;
  choices: GuidanceChoice[];
  /** What the figures stand for when the scan's truncation is not one the bench measured. */
  note?: string;
}

const pct = (f: number) => `${Math.round(100 * f)}%`;

const SIDES: Record<TruncationClass['sides'], string> = { both: 'cut off on both sides', one: 'cut off on one side', none: 'not cut off' };

const GIVEN: Record<KnownKind, string> = {
  nothing: 'You have given nothing beyond the data yet.',
  'a known region': 'You have given a known region.',
  'the outline': 'You have given the outline.',
  'a known region and the outline': 'You have given a known region and the outline.',
};

/** The bench's cases of each measured truncation (README, "Choosing a method"). */
const CASES: Record<GuidanceRow['severity'], string> = {
  severe: 'severe: C-arm-like fan, field 0.42 of the body\'s width',
  moderate: 'moderate: the demo scan, field 0.60 of the body\'s width',
};

/** The table's rows grouped by what is known and what to choose, each with its figures per measured truncation. */
function choices(nearest: GuidanceRow['severity'] | undefined, given: KnownKind): GuidanceChoice[] {
  const out: GuidanceChoice[] = [];
  for (const r of GUIDANCE) {
    let c = out.find((x) => x.knowledge === r.knowledge && x.choose === r.choose);
    if (!c) {
      c = { knowledge: r.knowledge, choose: r.choose, figures: [], yours: r.knowledge === given };
      out.push(c);
    }
    c.figures.push({ severity: r.severity, cases: CASES[r.severity], measured: r.measured, ...(r.note ? { note: r.note } : {}), nearest: r.severity === nearest });
  }
  return out;
}

/** The guidance for a scan's truncation summary and what the user has given. */
export function guidanceView(s: TruncationSummary, given: KnownKind): GuidanceView {
  const c = classifyTruncation(s);
  const reach = Math.max(s.maxExtentMm.left, s.maxExtentMm.right);
  if (c.severity === 'none') {
    return {
      truncation: c, scan: `No view is cut off: the field of view (${s.fovDiameterMm.toFixed(0)} mm) holds the object.`, given: GIVEN[given], choices: [],
      note: 'FBP needs no truncation correction here; the knowledge of a region or the outline adds nothing the data do not hold.',
    };
  }
  const scan = `${c.severity[0].toUpperCase()}${c.severity.slice(1)} truncation: the field of view (${s.fovDiameterMm.toFixed(0)} mm) covers ${pct(c.fovFraction)} of the object's estimated width (${s.objectDiameterMm.toFixed(0)} mm), ${SIDES[c.sides]}, the object reaching up to ${reach.toFixed(0)} mm beyond the edges.`;
  const note = c.severity === 'mild'
    ? 'Mild truncation: FBP with water cylinder extension is usually enough. The bench measured moderate and severe truncation, where the choices differ more.'
    : undefined;
  return { truncation: c, scan, given: GIVEN[given], choices: choices(c.severity === 'severe' ? 'severe' : 'moderate', given), ...(note ? { note } : {}) };
}
