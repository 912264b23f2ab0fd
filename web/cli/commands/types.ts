/** What a command returns: a JSON object for --json, a text summary, and warnings for stderr. */
export interface CommandResult {
  json: unknown;
  text: string;
  warnings?: string[];
}
