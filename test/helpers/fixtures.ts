// Committed reference fixtures (test/fixtures, listed in test/fixtures/MANIFEST.json with the
// generator, library versions, source and licence of each file): read with Node alone.
import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import type { NamedBytes } from '../../web/core/formats/named-file';

/** Absolute path of a fixture, given its path under test/fixtures. */
export function fixturePath(path: string): string {
  return fileURLToPath(new URL(`../fixtures/${path}`, import.meta.url));
}

/** A fixture's bytes. */
export function fixtureBytes(path: string): Uint8Array {
  return new Uint8Array(readFileSync(fixturePath(path)));
}

/** A fixture as a named file, as the readers take it. */
export function fixtureFile(path: string): NamedBytes {
  return { name: path.slice(path.lastIndexOf('/') + 1), bytes: fixtureBytes(path) };
}

/** Every file of a fixture folder, by name order, as named files. */
export function fixtureFolder(path: string): NamedBytes[] {
  const dir = fixturePath(path);
  return readdirSync(dir).sort().map((name) => ({ name, bytes: new Uint8Array(readFileSync(join(dir, name))) }));
}

/** A little-endian float32 fixture (`.f32`). */
export function fixtureF32(path: string): Float32Array {
  const b = fixtureBytes(path);
  return new Float32Array(b.buffer, b.byteOffset, b.byteLength / 4);
}

/** A JSON fixture. */
export function fixtureJson<T>(path: string): T {
  return JSON.parse(readFileSync(fixturePath(path), 'utf8')) as T;
}
