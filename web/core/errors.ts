/**
 * Bad input from the user (a file, an option, a geometry). The CLI turns it into one line on
 * stderr and exit code 2; the page shows the message. Messages name the field, the value
 * received and what was expected.
 */
export class InputError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'InputError';
  }
}

/** Thrown when a run is cancelled; nothing is stored for a cancelled run. */
export class CancelledError extends Error {
  constructor(message = 'cancelled') {
    super(message);
    this.name = 'CancelledError';
  }
}

/** Throws CancelledError when the signal has fired. */
export function throwIfCancelled(signal?: AbortSignal): void {
  if (signal?.aborted) throw new CancelledError();
}
