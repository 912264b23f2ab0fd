// rimfill bench --only formats: read throughput (MB/s) and peak memory for a ~200 MB float32
// NRRD scan and a ~200 MB 16-bit TIFF stack. Each read runs in a fresh process so that its
// peak resident memory is its own; the excess over (file bytes + float32 output) shows
// whether the reader copied the data more than once.
import { execFileSync } from 'node:child_process';
import { closeSync, fsyncSync, mkdtempSync, openSync, rmSync, statSync, writeSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { readProjectionData } from '../../core/formats/read-scan';
import { writeNrrd } from '../../core/formats/nrrd';
import { writeTiffStack } from '../../core/formats/tiff';
import { gatherFiles } from '../gather';
import { peakRssMb } from './peak-memory';

const MB = 2 ** 20;

export interface FormatReadFigures {
  file: string;
  fileMb: number;
  outputMb: number;
  seconds: number;
  mbPerS: number;
  baselineRssMb: number;
  peakRssMb: number;
  /** Peak minus baseline minus file bytes, in units of the float32 output: about 1 = one copy. */
  copiesOfOutput: number;
}

/** Writes a file and flushes it to disk, so that its reading is not slowed by write-back. */
function writeFlushed(path: string, bytes: Uint8Array): void {
  const fd = openSync(path, 'w');
  try {
    writeSync(fd, bytes);
    fsyncSync(fd);
  } finally {
    closeSync(fd);
  }
}

/** Reads one file in this process and returns the figures (run by the child process). */
export async function measureRead(path: string): Promise<FormatReadFigures> {
  const baseline = peakRssMb();
  const t0 = performance.now();
  const files = gatherFiles(path, 'bench input');
  const p = await readProjectionData(files, { maxBytes: 2 ** 31 });
  const seconds = (performance.now() - t0) / 1000;
  const peak = peakRssMb();
  const fileMb = files.reduce((n, f) => n + f.bytes.length, 0) / MB;
  const outputMb = p.data.byteLength / MB;
  return {
    file: path.split('/').pop()!, fileMb, outputMb, seconds, mbPerS: fileMb / seconds,
    baselineRssMb: baseline, peakRssMb: peak, copiesOfOutput: (peak - baseline - fileMb) / outputMb,
  };
}

/** Writes the two ~200 MB inputs, measures each read in a child process, and cleans up. */
export async function benchFormats(cliPath: string): Promise<FormatReadFigures[]> {
  const dir = mkdtempSync(join(tmpdir(), 'rimfill-bench-'));
  try {
    const n = 1024 * 1024;
    // 50 views of 1024 x 1024 float32 = 200 MiB, and 100 frames of 1024 x 1024 uint16 = 200 MiB.
    const pattern = (count: number, scale: number) => {
      const a = new Float32Array(count);
      for (let i = 0; i < count; i++) a[i] = (i % 4093) * scale;
      return a;
    };
    const inputs: string[] = [join(dir, 'scan-float32.nrrd'), join(dir, 'frames-uint16.tif')];
    writeFlushed(inputs[0], await writeNrrd(pattern(50 * n, 1e-3), [1024, 1024, 50], {}, {}));
    writeFlushed(inputs[1], writeTiffStack({ width: 1024, height: 1024, frames: 100, data: pattern(100 * n, 10) }, 'uint16'));
    return inputs.map((path) => {
      if (statSync(path).size < 190 * MB) throw new Error(`bench input ${path} is smaller than expected`);
      const out = execFileSync(process.execPath, [cliPath, 'bench', '--read', path], { encoding: 'utf8', maxBuffer: 1 << 20 });
      return JSON.parse(out) as FormatReadFigures;
    });
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

/** Text lines for the figures. */
export function formatFiguresText(rows: FormatReadFigures[]): string[] {
  return rows.map((r) => `read ${r.file.padEnd(20)} ${r.fileMb.toFixed(0)} MB in ${(r.seconds * 1000).toFixed(0)} ms = ${r.mbPerS.toFixed(0)} MB/s; peak memory ${r.peakRssMb.toFixed(0)} MB (baseline ${r.baselineRssMb.toFixed(0)} MB, file ${r.fileMb.toFixed(0)} MB, float32 output ${r.outputMb.toFixed(0)} MB: ${r.copiesOfOutput.toFixed(2)} copies)`);
}
