// DICOM unique identifiers made on this machine: "2.25." followed by a random (version 4) UUID
// written as one decimal integer (DICOM PS3.5 B.2, "UUID derived UID"; the UUID after RFC 4122
// section 4.4). No registered root is needed and no network is asked.

/** Rimfill's Implementation Class UID (PS3.7 D.3.3.2), made once the same way. */
export const IMPLEMENTATION_CLASS_UID = '2.25.111573504664949833984898404592182039319';

/** A fresh UID from 16 random bytes (a source for tests may be given). */
export function newUid(random: (n: number) => Uint8Array = (n) => crypto.getRandomValues(new Uint8Array(n))): string {
  const b = random(16);
  b[6] = (b[6] & 0x0f) | 0x40; // version 4
  b[8] = (b[8] & 0x3f) | 0x80; // variant 10
  let v = 0n;
  for (const x of b) v = (v << 8n) | BigInt(x);
  return `2.25.${v.toString()}`;
}
