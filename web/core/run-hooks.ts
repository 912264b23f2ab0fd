/** Progress and cancellation hooks for long runs. */
export interface RunHooks {
  /** Fraction done in [0, 1] and a short stage name. */
  onProgress?: (fraction: number, stage: string) => void;
  /** Cancels the run; it then rejects with CancelledError and stores nothing. */
  signal?: AbortSignal;
}
