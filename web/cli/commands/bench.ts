// rimfill bench: speed and memory of the engine's parts. Each section runs in a fresh process
// (so its peak resident memory is its own) and prints its figures; targets live here, never in
// tests.
import { spawnSync } from 'node:child_process';
import { InputError } from '../../core/errors';
import { parseArgs } from '../args';
import { measureRead } from '../bench/formats';
import { ACCURACY_ROWS, selectRows } from '../bench/accuracy/rows';
import { SECTIONS } from '../bench/sections';
import type { CommandResult } from './types';

export const benchHelp = `rimfill bench [--only ${SECTIONS.map((s) => s.name).join(',')}] [--repeat K] [--rows words] [--json]
  Times the engine's parts; each section runs in its own process and reports its peak memory.
${SECTIONS.map((s) => `    ${s.name.padEnd(10)} ${s.about}`).join('\n')}
  --rows words   accuracy: only the rows whose method label contains one of these comma-separated
                 words (e.g. --rows sart,tv; default every row)`;

interface SectionOutput {
  name: string;
  json: unknown;
  lines: string[];
  peakRssMb: number;
}

function selected(only: unknown): typeof SECTIONS {
  if (only === undefined) return SECTIONS;
  const names = String(only).split(',').map((s) => s.trim());
  const unknown = names.filter((n) => !SECTIONS.some((s) => s.name === n));
  if (unknown.length) throw new InputError(`option --only: got "${unknown[0]}", expected one or more of ${SECTIONS.map((s) => s.name).join(', ')}`);
  return SECTIONS.filter((s) => names.includes(s.name));
}

/** The words of --rows, checked against the accuracy rows (undefined: every row). */
function rowWords(v: unknown): string[] | undefined {
  if (v === undefined) return undefined;
  const words = String(v).split(',').map((w) => w.trim()).filter(Boolean);
  if (!words.length || selectRows(words).length === 0) {
    throw new InputError(`option --rows: got "${String(v)}", expected words from the accuracy rows' labels: ${ACCURACY_ROWS.map((r) => r.label).join('; ')}`);
  }
  return words;
}

export async function bench(argv: string[]): Promise<CommandResult> {
  const a = parseArgs(argv, { repeat: 'int', json: 'flag', only: 'string', section: 'string', read: 'string', rows: 'string' }, 0);
  const repeat = Math.max(1, (a.options.repeat as number | undefined) ?? 3);
  const rows = rowWords(a.options.rows);
  const cliPath = process.argv[1];
  if (typeof a.options.read === 'string') {
    // One measured read, run in a child process by the formats section.
    const figures = await measureRead(a.options.read);
    return { json: figures, text: JSON.stringify(figures) };
  }
  if (typeof a.options.section === 'string') {
    // One section in this (fresh) process: the parent collects its JSON.
    const s = SECTIONS.find((x) => x.name === a.options.section);
    if (!s) throw new InputError(`option --section: got "${a.options.section}"`);
    const r = await s.run(repeat, cliPath, { rows });
    const out: SectionOutput = { name: s.name, json: r.json, lines: r.lines, peakRssMb: process.resourceUsage().maxRSS / 1024 };
    return { json: out, text: JSON.stringify(out) };
  }
  const outputs: SectionOutput[] = [];
  const text: string[] = [];
  for (const s of selected(a.options.only)) {
    if (!a.options.json) process.stderr.write(`bench: ${s.name}...\n`);
    // The section's progress lines and errors go straight to our stderr (some sections run
    // for many minutes); its result is the last line of its stdout.
    const child = spawnSync(process.execPath, [cliPath, 'bench', '--section', s.name, '--repeat', String(repeat), ...(rows ? ['--rows', rows.join(',')] : []), '--json'], {
      encoding: 'utf8', maxBuffer: 64 * 2 ** 20, stdio: ['ignore', 'pipe', 'inherit'],
    });
    if (child.status !== 0) throw new Error(`bench section ${s.name} failed (exit ${child.status ?? child.signal}; its messages are above)`);
    const o = JSON.parse(child.stdout.trim().split('\n').at(-1)!) as SectionOutput;
    outputs.push(o);
    text.push(`== ${o.name}`, ...o.lines, `peak resident memory of this section: ${o.peakRssMb.toFixed(0)} MB`, '');
  }
  return { json: { sections: outputs }, text: text.join('\n').trimEnd() };
}
