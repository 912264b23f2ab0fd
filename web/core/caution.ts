// The standing caution (README, page, CLI help, npm start): what Rimfill is for, and to whom
// clinical decisions belong.

/** One sentence, both parts: research and quality work, not diagnosis; defer to regulation and clinical practice. */
export const CAUTION =
  'Rimfill is for research and quality work, not for diagnosis: follow your local regulations and licensed clinical practice for any clinical decision.';
