// Independent readers for what the page exports: the NRRD header and float32 body (Teem NRRD
// format spec, http://teem.sourceforge.net/nrrd/format.html) and the PNG signature and IHDR
// chunk (PNG spec, ISO/IEC 15948, 5.2 and 11.2.2). Written here, not imported from the page,
// so a fault in the page's writer cannot hide in a shared reader.

/** Parses an attached, raw, little-endian float NRRD. */
export function parseFloatNrrd(buf) {
  const end = buf.indexOf('\n\n');
  if (buf.subarray(0, 4).toString() !== 'NRRD' || end < 0) throw new Error('not an NRRD file with a header');
  const fields = {}, keys = {};
  for (const line of buf.subarray(0, end).toString('latin1').split('\n').slice(1)) {
    if (line.startsWith('#')) continue;
    const kv = line.indexOf(':=');
    if (kv >= 0) keys[line.slice(0, kv)] = line.slice(kv + 2);
    else {
      const i = line.indexOf(': ');
      fields[line.slice(0, i)] = line.slice(i + 2);
    }
  }
  if (fields.type !== 'float' || fields.encoding !== 'raw' || fields.endian !== 'little') throw new Error(`unexpected NRRD encoding: ${JSON.stringify(fields)}`);
  const sizes = fields.sizes.split(' ').map(Number);
  const n = sizes.reduce((a, b) => a * b, 1);
  const body = buf.subarray(end + 2);
  if (body.length !== n * 4) throw new Error(`NRRD body has ${body.length} bytes, sizes promise ${n * 4}`);
  const data = new Float32Array(n);
  for (let i = 0; i < n; i++) data[i] = body.readFloatLE(i * 4);
  return { fields, keys, sizes, data };
}

/** Width, height, bit depth and colour type of a PNG. */
export function pngHeader(buf) {
  const sig = [137, 80, 78, 71, 13, 10, 26, 10];
  if (!sig.every((b, i) => buf[i] === b)) throw new Error('not a PNG (signature)');
  if (buf.subarray(12, 16).toString() !== 'IHDR') throw new Error('PNG without IHDR first');
  return { width: buf.readUInt32BE(16), height: buf.readUInt32BE(20), bitDepth: buf[24], colourType: buf[25] };
}
