// Reference fixtures: small files made once from general-purpose Python libraries (Debian's
// python3-numpy, -pydicom, -tifffile, -pil, -skimage) and committed under test/fixtures, so
// the fast test tier needs Node alone. test/fixtures/MANIFEST.json lists each generator (its
// command, the Python modules and versions it ran with) and each file (what it is, its source
// and licence). A key ending in "/" names a folder: every file in it is the generator's, and a
// file the generator no longer writes (or a new one) is a difference too.
//
//   node scripts/reference/fixtures.mjs           regenerate into a temporary folder and fail if
//                                                 any committed fixture differs (npm run test:reference)
//   node scripts/reference/fixtures.mjs --write   regenerate and overwrite the committed fixtures
//
// Without Python or one of its modules this fails, naming the Debian packages to install:
// a tier that cannot run says why, it never passes silently.
import { execFileSync } from 'node:child_process';
import { cpSync, existsSync, mkdirSync, mkdtempSync, readdirSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join, resolve } from 'node:path';

const root = resolve(import.meta.dirname, '../..');
const fixtures = join(root, 'test/fixtures');
const manifestPath = join(fixtures, 'MANIFEST.json');
const PYTHON = process.env.RIMFILL_PYTHON ?? '/usr/bin/python3';
const DEBIAN = { numpy: 'python3-numpy', pydicom: 'python3-pydicom', tifffile: 'python3-tifffile', PIL: 'python3-pil', skimage: 'python3-skimage' };

function moduleVersions(modules) {
  const code = `import importlib, json\nprint(json.dumps({m: importlib.import_module(m).__version__ for m in ${JSON.stringify(modules)}}))`;
  try {
    return JSON.parse(execFileSync(PYTHON, ['-c', code], { encoding: 'utf8', stdio: ['ignore', 'pipe', 'pipe'] }));
  } catch (err) {
    const pkgs = modules.map((m) => DEBIAN[m] ?? m).join(' ');
    throw new Error(`the reference tier needs ${PYTHON} with ${modules.join(', ')}: apt-get install -y ${pkgs} (${String(err.message).split('\n')[0]})`);
  }
}

function run(generator, out) {
  const args = generator.command.slice(1).map((a) => a.replaceAll('{out}', out));
  execFileSync(PYTHON, args, { cwd: root, stdio: ['ignore', 'inherit', 'pipe'] });
}

/** Relative paths of the files under `dir` (recursively), sorted. */
function listFiles(dir) {
  return readdirSync(dir, { recursive: true }).map(String).filter((f) => statSync(join(dir, f)).isFile()).sort();
}

/** How a fresh output (a file, or a folder for keys ending in "/") differs from the committed one; '' when it does not. */
function difference(fresh, committed, isFolder) {
  if (!existsSync(committed)) return 'is not committed';
  if (!isFolder) return readFileSync(fresh).equals(readFileSync(committed)) ? '' : 'has other bytes';
  const a = listFiles(fresh), b = listFiles(committed);
  const added = a.filter((f) => !b.includes(f)), gone = b.filter((f) => !a.includes(f));
  if (added.length || gone.length) return `holds other files (new: ${added.join(', ') || 'none'}; no longer written: ${gone.join(', ') || 'none'})`;
  const changed = a.filter((f) => !readFileSync(join(fresh, f)).equals(readFileSync(join(committed, f))));
  return changed.length ? `has other bytes in ${changed.join(', ')}` : '';
}

function main() {
  const write = process.argv.includes('--write');
  const manifest = JSON.parse(readFileSync(manifestPath, 'utf8'));
  const problems = [];
  let checked = 0;
  for (const g of manifest.generators) {
    const versions = moduleVersions(g.modules);
    const tmp = mkdtempSync(join(tmpdir(), 'rimfill-fixtures-'));
    try {
      run(g, tmp);
      for (const file of Object.keys(g.files)) {
        const isFolder = file.endsWith('/');
        const fresh = join(tmp, file);
        const committed = join(fixtures, file);
        if (!existsSync(fresh)) {
          problems.push(`${g.id}: the generator wrote no ${file}`);
          continue;
        }
        if (write) {
          rmSync(committed, { recursive: true, force: true });
          mkdirSync(dirname(committed), { recursive: true });
          cpSync(fresh, committed, { recursive: true });
        } else {
          const diff = difference(fresh, committed, isFolder);
          if (diff) {
            const was = Object.entries(g.versions ?? {}).map(([m, v]) => `${m} ${v}`).join(', ');
            const now = Object.entries(versions).map(([m, v]) => `${m} ${v}`).join(', ');
            problems.push(`${g.id}: ${file} ${diff} in a fresh run (committed with ${was}; now ${now}): rerun with --write if the change is understood`);
          }
        }
        checked++;
      }
      const declared = Object.keys(g.files);
      for (const f of listFiles(tmp)) {
        if (!declared.some((d) => (d.endsWith('/') ? f.startsWith(d) : f === d))) problems.push(`${g.id}: wrote ${f}, which MANIFEST.json does not list`);
      }
      if (write) g.versions = versions;
    } finally {
      rmSync(tmp, { recursive: true, force: true });
    }
  }
  if (write) writeFileSync(manifestPath, `${JSON.stringify(manifest, null, 2)}\n`);
  for (const p of problems) console.error(p);
  console.log(`fixtures: ${checked} ${write ? 'written' : 'checked'}, ${problems.length} problem(s)`);
  return problems.length ? 1 : 0;
}

try {
  process.exitCode = main();
} catch (err) {
  console.error(err.message);
  process.exitCode = 1;
}
