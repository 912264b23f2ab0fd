// An image as PNG at a display window (what the viewer shows, at the image's own resolution),
// with the overlay of its undetermined pixels when the viewer shows it.
import { greyPixels, type DisplayImage } from '../logic/display';
import { overlayPixels } from '../logic/undetermined-overlay';
import type { DisplayWindow } from '../logic/window-level';

function canvasOf(image: DisplayImage, window: DisplayWindow, overlay: boolean): HTMLCanvasElement {
  const { nx, ny } = image.grid;
  const c = document.createElement('canvas');
  c.width = nx;
  c.height = ny;
  const ctx = c.getContext('2d')!;
  ctx.putImageData(new ImageData(greyPixels(image.values, nx, ny, window) as Uint8ClampedArray<ArrayBuffer>, nx, ny), 0, 0);
  if (overlay && image.undetermined) {
    // putImageData replaces pixels; the tint is blended over the image from a canvas of its own.
    const o = document.createElement('canvas');
    o.width = nx;
    o.height = ny;
    o.getContext('2d')!.putImageData(new ImageData(overlayPixels(image.undetermined, nx, ny) as Uint8ClampedArray<ArrayBuffer>, nx, ny), 0, 0);
    ctx.drawImage(o, 0, 0);
  }
  return c;
}

/** PNG bytes of the windowed image (with the undetermined overlay when `overlay`). */
export function pngBlob(image: DisplayImage, window: DisplayWindow, overlay = false): Promise<Blob> {
  return new Promise((resolve, reject) => canvasOf(image, window, overlay).toBlob((b) => (b ? resolve(b) : reject(new Error('the browser could not encode the PNG'))), 'image/png'));
}

/** A data: URL of the windowed image (for the report; with the undetermined overlay when `overlay`). */
export function pngDataUrl(image: DisplayImage, window: DisplayWindow, overlay = false): string {
  return canvasOf(image, window, overlay).toDataURL('image/png');
}
