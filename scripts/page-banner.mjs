// What `npm start` prints once the page is served: where it is, how to open it without a
// server, and the standing caution (the same sentence as web/core/caution.ts; a test checks).

export const CAUTION =
  'Rimfill is for research and quality work, not for diagnosis: follow your local regulations and licensed clinical practice for any clinical decision.';

/** The banner lines for a page served at `url`, also found on disk at `fileUrl`. */
export function startBanner(url, fileUrl) {
  return [
    `Rimfill is served at ${url} (this computer only; press Ctrl+C to stop).`,
    `Without a server, open the file directly: ${fileUrl}`,
    CAUTION,
  ];
}
