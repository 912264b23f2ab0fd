// How the adjoint projector splits views between workers. The views of a call are cut into a
// fixed number of chunks, each accumulated into its own image and summed in chunk order: float
// sums then do not depend on how many workers share the chunks, so one worker and several
// give the same bits (iterative methods amplify even rounding differences).
import { splitRange } from './split';

/** Chunks per adjoint call: 4, or one per worker when there are more workers. */
export function adjointChunkCount(workers: number): number {
  return Math.max(4, workers);
}

export interface AdjointChunkPlan {
  /** View range of each chunk, relative to the first view of the call. */
  views: Array<[number, number]>;
  /** Worker of each chunk. */
  owner: number[];
  /** Chunks [c0, c1) of each worker (contiguous), one entry per worker that has any. */
  owned: Array<[number, number]>;
  /** Runs: batches[b][w] is the chunk worker w does in run b, or -1. */
  batches: number[][];
}

/** Splits `nViews` views into at most `chunks` chunks and deals them to `workers` workers. */
export function planAdjointChunks(nViews: number, chunks: number, workers: number): AdjointChunkPlan {
  const views = splitRange(nViews, chunks);
  const owned = splitRange(views.length, workers);
  const owner = new Array<number>(views.length);
  owned.forEach(([c0, c1], w) => {
    for (let c = c0; c < c1; c++) owner[c] = w;
  });
  const depth = Math.max(0, ...owned.map(([c0, c1]) => c1 - c0));
  const batches = Array.from({ length: depth }, (_, b) => owned.map(([c0, c1]) => (c0 + b < c1 ? c0 + b : -1)));
  return { views, owner, owned, batches };
}
