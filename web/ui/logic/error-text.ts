// What the page says about a failure: the error's message, or the thrown value as text.

/** The message of `err` (an Error's message, else the value as text). */
export function errorText(err: unknown): string {
  return err instanceof Error ? err.message : String(err);
}
