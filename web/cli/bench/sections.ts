// The bench sections `rimfill bench` runs, each in a fresh process so that its peak memory is
// its own. A new section: a module returning a SectionResult, and one entry here.
import { availableParallelism } from 'node:os';
import { selectRows } from './accuracy/rows';
import { accuracyLines, benchAccuracy } from './accuracy/run';
import { benchExtension, extensionBenchLines } from './extension-overhead';
import { benchFdk } from './fdk-bench';
import { benchFormats, formatFiguresText } from './formats';
import { benchIterative, iterativeLines } from './iterative';
import { benchKernels } from './kernels';
import { benchIterative3d } from './iterative-3d';
import { benchNativeFdk } from './native-fdk';
import { benchNetwork, networkBenchText } from './network';
import type { SectionResult } from './section';
import { openWorkspace } from '../engine-node';

/** Options of `rimfill bench` that some sections read. */
export interface SectionOptions {
  /** accuracy: words selecting rows by label (accuracy/rows.ts selectRows). */
  rows?: string[];
}

export interface BenchSection {
  name: string;
  /** One line for --help. */
  about: string;
  run(repeat: number, cliPath: string, options?: SectionOptions): Promise<SectionResult>;
}

export const SECTIONS: BenchSection[] = [
  { name: 'kernels', about: 'projector, backprojector and FBP on 512x512, 720 views, 1024 channels (1 and 2 workers, TypeScript baseline)', run: (r) => benchKernels(r) },
  {
    name: 'extension', about: 'cost of detector extension (truncation correction) in an FBP of the benchmark size',
    run: async (r) => {
      const b = await benchExtension(Math.min(2, availableParallelism()), r);
      return { json: b, lines: extensionBenchLines(b) };
    },
  },
  {
    name: 'iterative', about: '20 iterations of OS-SART + reweighted TV on a 512x512 extended grid, 360 views, fan beam (1 and 2 workers); prior-guided for information',
    run: async (r) => {
      // Each run takes seconds: best of at most two.
      const b = await benchIterative(Math.min(r, 2));
      return { json: b, lines: iterativeLines(b) };
    },
  },
  {
    name: 'accuracy', about: 'severe truncation (FOV radius 0.42 of the body half-width, C-arm fan): inside/outside-FOV RMSE, residual and time of each method with each kind of knowledge, on real CT slices and the thorax phantom, with noisy, short-scan, off-centre and wrong-knowledge variants',
    run: async (_r, _cli, options) => {
      const ws = await openWorkspace(Math.min(2, availableParallelism()));
      try {
        const r = await benchAccuracy(ws, (line) => process.stderr.write(`${line}\n`), selectRows(options?.rows));
        return { json: r, lines: accuracyLines(r) };
      } finally {
        ws.dispose();
      }
    },
  },
  {
    name: 'network', about: 'a U-Net-sized network (about 2 million weights) on a 256x256 image, CPU',
    run: async (r) => {
      const b = await benchNetwork(r);
      return { json: b, lines: networkBenchText(b).split('\n') };
    },
  },
  {
    name: 'fdk', about: 'FDK of a 256^3 volume from 360 projections of 512x384 (1 and 2 workers)',
    run: async () => {
      const { text, ...json } = await benchFdk((line) => process.stderr.write(`${line}\n`));
      return { json, lines: text.split('\n') };
    },
  },
  {
    name: 'iterative3d', about: '20 iterations of 3D OS-SART and 5 of the prior-guided method on 256^3 from 360 projections of 512x384, with peak memory and a cancel (2 workers; about 40 minutes)',
    run: () => benchIterative3d((line) => process.stderr.write(`${line}\n`)),
  },
  {
    name: 'native', about: 'rimfill reconstruct (FDK 256^3) against a straightforward native C build (FFTW, OpenMP), both on 2 cores',
    run: (_r, cliPath) => benchNativeFdk(cliPath, (line) => process.stderr.write(`${line}\n`)),
  },
  {
    name: 'formats', about: 'read speed and peak memory for a 200 MB NRRD scan and a 200 MB TIFF stack',
    run: async (_r, cliPath) => {
      const rows = await benchFormats(cliPath);
      return { json: rows, lines: formatFiguresText(rows) };
    },
  },
];
