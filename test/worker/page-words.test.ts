// Messages the page shows speak the page's language: no command-line options (a remedy that
// names one says it again in the page's words), and a refused file is named. The coordinator
// worker sends InputError.pageMessage to the page.
import 'fake-indexeddb/auto';
import { createStore } from 'idb-keyval';
import { readdirSync, readFileSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { InputError } from '../../web/core/errors';
import { writeImageNrrd } from '../../web/core/formats/image-nrrd';
import { writeScanNrrd } from '../../web/core/formats/scan-nrrd';
import { writeTiffStack } from '../../web/core/formats/tiff';
import { squareGrid } from '../../web/core/image';
import { saveScan } from '../../web/store/scans';
import { Coordinator } from '../../web/worker/coordinator';
import { localWorkspace } from '../helpers/engine';

let n = 0;
const coordinator = () => {
  const store = createStore(`words-${n++}`, 'records');
  return { store, c: new Coordinator({ openWorkspace: () => localWorkspace(1), sharedMemory: false, store }) };
};

async function refusal(p: Promise<unknown>): Promise<InputError> {
  const err = await p.then(() => undefined, (e: unknown) => e);
  expect(err).toBeInstanceOf(InputError);
  return err as InputError;
}

const OPTION = /(^|[\s(])--[a-z]/;

describe('messages in the page', () => {
  it('TIFF frames without a geometry: the file is named, and the way out is said in the page\'s words', async () => {
    const { c } = coordinator();
    const frames = writeTiffStack({ width: 8, height: 1, frames: 4, data: new Float32Array(32).fill(1000) });
    const err = await refusal(c.importScan([new File([frames as BlobPart], 'frames.tif')], undefined, undefined, {}));
    expect(err.pageMessage).toMatch(/^frames\.tif: scan \(TIFF\): the file carries no geometry; add its geometry \(a \.json file\) to the same import$/);
    expect(err.pageMessage).not.toMatch(OPTION);
    // The command line keeps its own words.
    expect(err.message).toMatch(/give one with --geometry geom\.json$/);
  });

  it('an image in HU added to a scan without mu_water: the file is named, and where to set mu of water', async () => {
    const { c, store } = coordinator();
    const geometry = { kind: 'parallel' as const, detector: { shape: 'flat' as const, channels: 16, rows: 1, pitch: [1, 1] as [number, number], offset: [0, 0] as [number, number] }, anglesDeg: { start: 0, step: 20, count: 9 } };
    const scan = await saveScan({ name: 'no water', scan: { geometry, data: new Float32Array(16 * 9) }, source: { type: 'file', fileNames: ['x.nrrd'] } }, store);
    const hu = await writeImageNrrd({ grid: squareGrid(8, 2), data: new Float32Array(64), quantity: 'hu' });
    const err = await refusal(c.importImage(scan.id, [new File([hu as BlobPart], 'earlier.nrrd')], undefined, {}));
    expect(err.pageMessage).toMatch(/^earlier\.nrrd: .*HU but mu_water is unknown; set the scan's mu of water first \(HU calibration, in the Images tab\)$/);
    expect(err.pageMessage).not.toMatch(OPTION);
  });

  it('a scan file that is fine gives no message at all (the check above is not vacuous)', async () => {
    const { c } = coordinator();
    const geometry = { kind: 'parallel' as const, detector: { shape: 'flat' as const, channels: 16, rows: 1, pitch: [1, 1] as [number, number], offset: [0, 0] as [number, number] }, anglesDeg: { start: 0, step: 20, count: 9 } };
    const bytes = await writeScanNrrd({ geometry, data: new Float32Array(16 * 9) });
    await expect(c.importScan([new File([bytes as BlobPart], 'fine.nrrd')], undefined, undefined, {})).resolves.toMatchObject({ name: 'fine.nrrd' });
  });

  it('no message the page can show names a command-line option outside a remedy\'s command-line words', () => {
    const root = new URL('../../web/', import.meta.url).pathname;
    const offenders: string[] = [];
    const walk = (dir: string) => {
      for (const name of readdirSync(dir)) {
        const path = join(dir, name);
        if (statSync(path).isDirectory()) walk(path);
        else if (path.endsWith('.ts')) {
          const text = readFileSync(path, 'utf8');
          for (let i = text.indexOf('new InputError('); i >= 0; i = text.indexOf('new InputError(', i + 1)) {
            const call = text.slice(i, text.indexOf(');', i)).replace(/cli:\s*(['`])(?:(?!\1)[\s\S])*\1/g, '');
            if (OPTION.test(call)) offenders.push(`${path.slice(root.length)}: ${call.slice(0, 90)}`);
          }
        }
      }
    };
    for (const part of ['core', 'worker', 'store', 'ui']) walk(join(root, part));
    expect(offenders).toEqual([]);
  });
});
