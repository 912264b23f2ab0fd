// The rimfill command line (README, "Command line"): exit 0 ok, 2 bad input (one line on
// stderr, nothing written), 1 internal error.
import { CAUTION } from '../core/caution';
import { InputError } from '../core/errors';
import { bench, benchHelp } from './commands/bench';
import { calibrate, calibrateHelp } from './commands/calibrate';
import { compare, compareHelp } from './commands/compare';
import { demo, demoHelp } from './commands/demo';
import { exportCommand, exportHelp } from './commands/export';
import { inspect, inspectHelp } from './commands/inspect';
import { priorCheck, priorCheckHelp } from './commands/prior-check';
import { reconstruct, reconstructHelp } from './commands/reconstruct';
import { simulate, simulateHelp } from './commands/simulate';
import type { CommandResult } from './commands/types';

const COMMANDS: Record<string, { run: (argv: string[]) => Promise<CommandResult>; help: string }> = {
  simulate: { run: simulate, help: simulateHelp },
  inspect: { run: inspect, help: inspectHelp },
  reconstruct: { run: reconstruct, help: reconstructHelp },
  compare: { run: compare, help: compareHelp },
  export: { run: exportCommand, help: exportHelp },
  calibrate: { run: calibrate, help: calibrateHelp },
  'prior-check': { run: priorCheck, help: priorCheckHelp },
  bench: { run: bench, help: benchHelp },
  demo: { run: demo, help: demoHelp },
};

const USAGE = `rimfill: reconstruction of truncated CT scans

${CAUTION}

${Object.values(COMMANDS).map((c) => c.help).join('\n\n')}

Exit codes: 0 ok, 2 bad input, 1 internal error.`;

/** A message without the command's own name in front (the line already starts with it). */
export function withoutPrefix(message: string, command: string): string {
  return message.startsWith(`${command}: `) ? message.slice(command.length + 2) : message;
}

/** Runs the CLI; returns the exit code. */
export async function main(argv: string[]): Promise<number> {
  const [name, ...rest] = argv;
  if (!name || name === '--help' || name === 'help' || name === '-h') {
    process.stdout.write(`${USAGE}\n`);
    return name ? 0 : 2;
  }
  const cmd = COMMANDS[name];
  if (!cmd) {
    process.stderr.write(`rimfill: unknown command "${name}" (expected one of ${Object.keys(COMMANDS).join(', ')})\n`);
    return 2;
  }
  if (rest.includes('--help')) {
    process.stdout.write(`${cmd.help}\n\n${CAUTION}\n`);
    return 0;
  }
  try {
    const r = await cmd.run(rest);
    for (const w of r.warnings ?? []) process.stderr.write(`rimfill ${name}: warning: ${w}\n`);
    process.stdout.write(rest.includes('--json') ? `${JSON.stringify(r.json)}\n` : `${r.text}\n`);
    return 0;
  } catch (err) {
    if (err instanceof InputError) {
      process.stderr.write(`rimfill ${name}: ${withoutPrefix(err.message, name)}\n`);
      return 2;
    }
    process.stderr.write(`rimfill ${name}: internal error: ${err instanceof Error ? err.stack ?? err.message : String(err)}\n`);
    return 1;
  }
}
