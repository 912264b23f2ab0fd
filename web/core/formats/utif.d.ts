// Types for the parts of "utif" (UTIF.js) that tiff.ts uses.
declare module 'utif' {
  const UTIF: {
    decode(buffer: ArrayBuffer): Array<Record<string, unknown>>;
    decodeImage(buffer: ArrayBuffer, ifd: Record<string, unknown>, ifds: Array<Record<string, unknown>>): void;
  };
  export default UTIF;
}
