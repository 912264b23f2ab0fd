// A simulated C-arm-like scan as a detector would write it: one uncompressed uint16 TIFF file
// per view (counts = flat x exp(-line integral), rounded), a flat-field frame with a gentle gain
// pattern, and the geometry as JSON. The line integrals are exact projections of the 3D
// higher-contrast Shepp-Logan head (`rimfill simulate` through the built CLI). For the browser
// tests (small) and `npm run bench:browser` (400 views of 1024 x 768, about 630 MB): made on the
// fly, never committed.
import { execFileSync } from 'node:child_process';
import { closeSync, mkdirSync, openSync, readSync, writeFileSync } from 'node:fs';
import { join, resolve } from 'node:path';

const root = resolve(import.meta.dirname, '..');
const I0 = 30000;

/** One uncompressed little-endian uint16 TIFF page (TIFF 6.0 baseline, one strip). */
export function uint16Tiff(width, height, values) {
  const tags = [[256, 4, width], [257, 4, height], [258, 3, 16], [259, 3, 1], [262, 3, 1], [273, 4, 0], [277, 3, 1], [278, 4, height], [279, 4, width * height * 2], [339, 3, 1]];
  const ifd = 8, data = ifd + 2 + tags.length * 12 + 4;
  const out = Buffer.alloc(data + width * height * 2);
  out.write('II', 0, 'latin1');
  out.writeUInt16LE(42, 2);
  out.writeUInt32LE(ifd, 4);
  out.writeUInt16LE(tags.length, ifd);
  tags.forEach(([tag, type, value], i) => {
    const e = ifd + 2 + 12 * i;
    out.writeUInt16LE(tag, e);
    out.writeUInt16LE(type, e + 2);
    out.writeUInt32LE(1, e + 4);
    const v = tag === 273 ? data : value;
    if (type === 3) out.writeUInt16LE(v, e + 8);
    else out.writeUInt32LE(v, e + 8);
  });
  for (let i = 0; i < values.length; i++) out.writeUInt16LE(values[i], data + 2 * i);
  return out;
}

/** The flat frame: I0 with a 4% gain pattern across the panel. */
function flatFrame(channels, rows) {
  const f = new Uint16Array(channels * rows);
  for (let r = 0; r < rows; r++) {
    for (let c = 0; c < channels; c++) f[r * channels + c] = Math.round(I0 * (1 + 0.04 * Math.sin((7 * c) / channels) * Math.cos((5 * r) / rows)));
  }
  return f;
}

/**
 * Writes the scan into `dir`: frames/frame1.tif ..., flat.tif, geometry.json. Options: views,
 * channels, rows, pitch (mm), spanDeg, R and D (mm). Returns where everything is.
 */
export function writeCarmFrames(dir, { views, channels, rows, pitch, spanDeg = 200, R = 750, D = 1200 }) {
  const framesDir = join(dir, 'frames');
  mkdirSync(framesDir, { recursive: true });
  const geometry = {
    kind: 'cone', detector: { shape: 'flat', channels, rows, pitch: [pitch, pitch], offset: [0, 0] },
    sourceIsocenter: R, sourceDetector: D, anglesDeg: { start: 0, step: spanDeg / views, count: views },
  };
  const geometryPath = join(dir, 'geometry.json');
  writeFileSync(geometryPath, JSON.stringify(geometry));
  const lines = join(dir, 'lines.nrrd');
  execFileSync(process.execPath, [join(root, 'bin/rimfill.js'), 'simulate', '--phantom', 'shepp-logan-modified', '--geometry', geometryPath, '--out', lines], { stdio: ['ignore', 'ignore', 'inherit'] });
  const flat = flatFrame(channels, rows);
  writeFileSync(join(dir, 'flat.tif'), uint16Tiff(channels, rows, flat));
  // The line integrals, a view at a time from the NRRD body (float32 little-endian).
  const fd = openSync(lines, 'r');
  try {
    const head = Buffer.alloc(65536);
    readSync(fd, head, 0, head.length, 0);
    const start = head.indexOf('\n\n') + 2;
    const frame = channels * rows, bytes = Buffer.alloc(frame * 4), counts = new Uint16Array(frame);
    for (let v = 0; v < views; v++) {
      readSync(fd, bytes, 0, bytes.length, start + v * bytes.length);
      for (let i = 0; i < frame; i++) counts[i] = Math.min(65535, Math.round(flat[i] * Math.exp(-bytes.readFloatLE(4 * i))));
      writeFileSync(join(framesDir, `frame${v + 1}.tif`), uint16Tiff(channels, rows, counts));
    }
  } finally {
    closeSync(fd);
  }
  return { dir, framesDir, flat: join(dir, 'flat.tif'), geometry: geometryPath, views, lines };
}
