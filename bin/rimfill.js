#!/usr/bin/env node
// The rimfill command line. The engine and the CLI are built into build/ by `npm run build:engine`.
import { existsSync } from 'node:fs';
import { fileURLToPath } from 'node:url';

const cli = new URL('../build/cli.mjs', import.meta.url);
if (!existsSync(fileURLToPath(cli))) {
  process.stderr.write('rimfill: the engine is not built yet; run `npm run build:engine` first\n');
  process.exit(1);
}
const { main } = await import(cli.href);
process.exitCode = await main(process.argv.slice(2));
