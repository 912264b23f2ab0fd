// A strict command-line parser: known options only, typed values, one clear error otherwise.
import { InputError } from '../core/errors';

/** 'strings': a string option that may be repeated; its values are collected in order. */
export type OptionType = 'string' | 'strings' | 'number' | 'int' | 'flag';

export interface ParsedArgs {
  positional: string[];
  options: Record<string, string | string[] | number | boolean>;
}

/** Parses `argv` against `spec` (option name without dashes -> type). */
export function parseArgs(argv: string[], spec: Record<string, OptionType>, maxPositional: number): ParsedArgs {
  const positional: string[] = [];
  const options: ParsedArgs['options'] = {};
  for (let i = 0; i < argv.length; i++) {
    const a = argv[i];
    if (!a.startsWith('--')) {
      positional.push(a);
      continue;
    }
    const [name, inline] = a.slice(2).split(/=(.*)/s, 2);
    const type = spec[name];
    if (!type) throw new InputError(`unknown option --${name} (known: ${Object.keys(spec).map((k) => `--${k}`).join(' ')})`);
    if (name in options && type !== 'strings') throw new InputError(`option --${name} given twice`);
    if (type === 'flag') {
      if (inline !== undefined) throw new InputError(`option --${name} takes no value`);
      options[name] = true;
      continue;
    }
    const raw = inline ?? argv[++i];
    if (raw === undefined || (inline === undefined && raw.startsWith('--'))) throw new InputError(`option --${name} needs a value`);
    if (type === 'string') options[name] = raw;
    else if (type === 'strings') options[name] = [...((options[name] as string[] | undefined) ?? []), raw];
    else {
      const v = Number(raw);
      if (raw.trim() !== '' && !Number.isNaN(v) && !Number.isFinite(v)) throw new InputError(`option --${name}: got "${raw}", which is not a finite number`);
      if (!Number.isFinite(v) || raw.trim() === '') throw new InputError(`option --${name}: got "${raw}", expected a number`);
      if (type === 'int' && !Number.isInteger(v)) throw new InputError(`option --${name}: got "${raw}", expected a whole number`);
      options[name] = v;
    }
  }
  if (positional.length > maxPositional) throw new InputError(`unexpected argument "${positional[maxPositional]}"`);
  return { positional, options };
}

/** A required string option. */
export function requireString(a: ParsedArgs, name: string): string {
  const v = a.options[name];
  if (typeof v !== 'string') throw new InputError(`option --${name} is required`);
  return v;
}

/** A positive number option with a default. */
export function positiveNumber(a: ParsedArgs, name: string, fallback?: number): number | undefined {
  const v = a.options[name];
  if (v === undefined) return fallback;
  if (typeof v !== 'number' || !(v > 0)) throw new InputError(`option --${name}: got ${v}, expected a positive number`);
  return v;
}
