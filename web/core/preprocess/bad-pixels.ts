// Filling bad detector elements: each marked element of each detector row is replaced by
// linear interpolation between the nearest good elements of the same row (the nearest good
// value at a row end). Common practice for defect-pixel correction before reconstruction.

/**
 * Fills, in place, every element of `data` ([view][row][channel]) that `bad(view, index)`
 * reports as bad. Returns how many values were filled and how many rows had no good element
 * (left as they were).
 */
export function fillBadElements(
  data: Float32Array, channels: number, rows: number, bad: (view: number, indexInFrame: number) => boolean,
): { filled: number; rowsWithoutGood: number } {
  const frame = channels * rows;
  const views = data.length / frame;
  let filled = 0, rowsWithoutGood = 0;
  for (let v = 0; v < views; v++) {
    for (let r = 0; r < rows; r++) {
      const rowStart = r * channels;
      const o = v * frame + rowStart;
      let prevGood = -1;
      for (let c = 0; c <= channels; c++) {
        const isBad = c < channels && bad(v, rowStart + c);
        if (isBad) {
          continue;
        }
        // A run of bad elements lies between prevGood and c (c may be the row end).
        if (c - prevGood > 1) {
          if (prevGood < 0 && c === channels) {
            rowsWithoutGood++;
            break;
          }
          const left = prevGood >= 0 ? data[o + prevGood] : data[o + c];
          const right = c < channels ? data[o + c] : left;
          for (let k = prevGood + 1; k < c; k++) {
            const t = prevGood >= 0 && c < channels ? (k - prevGood) / (c - prevGood) : 0;
            data[o + k] = left + t * (right - left);
            filled++;
          }
        }
        prevGood = c;
      }
    }
  }
  return { filled, rowsWithoutGood };
}
