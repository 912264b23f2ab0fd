/** What to do about bad input, said twice: in the command line's words and in the page's. */
export interface Remedy {
  /** E.g. "give one with --geometry geom.json". */
  cli: string;
  /** E.g. "add its geometry (a .json file) to the same import". */
  page: string;
}

export interface InputErrorDetails {
  /** The input the message is about, as a path ("geometry.sourceDetector"), when one field is wrong. */
  field?: string;
  /** What to do about it; the message ends with it (the command line's words). */
  remedy?: Remedy;
}

/**
 * Bad input from the user (a file, an option, a geometry). The CLI turns it into one line on
 * stderr and exit code 2; the page shows the message. Messages name the field, the value
 * received and what was expected; a remedy that names a command-line option is given as a
 * Remedy, so the page can say it in its own words (pageMessage).
 */
export class InputError extends Error {
  /** The message without its remedy. */
  readonly statement: string;
  readonly field?: string;
  readonly remedy?: Remedy;

  constructor(message: string, details: InputErrorDetails = {}) {
    super(details.remedy ? `${message}; ${details.remedy.cli}` : message);
    this.name = 'InputError';
    this.statement = message;
    if (details.field !== undefined) this.field = details.field;
    if (details.remedy) this.remedy = details.remedy;
  }

  /** The message in the page's words (no command-line options). */
  get pageMessage(): string {
    return this.remedy ? `${this.statement}; ${this.remedy.page}` : this.message;
  }

  /** The same error with `prefix: ` in front (e.g. the name of the file it is about). */
  prefixed(prefix: string): InputError {
    return new InputError(`${prefix}: ${this.statement}`, { field: this.field, remedy: this.remedy });
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
