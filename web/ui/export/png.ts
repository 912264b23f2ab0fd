// An image as PNG at a display window (what the viewer shows, at the image's own resolution).
import { greyPixels, type DisplayImage } from '../logic/display';
import type { DisplayWindow } from '../logic/window-level';

function canvasOf(image: DisplayImage, window: DisplayWindow): HTMLCanvasElement {
  const { nx, ny } = image.grid;
  const c = document.createElement('canvas');
  c.width = nx;
  c.height = ny;
  c.getContext('2d')!.putImageData(new ImageData(greyPixels(image.values, nx, ny, window) as Uint8ClampedArray<ArrayBuffer>, nx, ny), 0, 0);
  return c;
}

/** PNG bytes of the windowed image. */
export function pngBlob(image: DisplayImage, window: DisplayWindow): Promise<Blob> {
  return new Promise((resolve, reject) => canvasOf(image, window).toBlob((b) => (b ? resolve(b) : reject(new Error('the browser could not encode the PNG'))), 'image/png'));
}

/** A data: URL of the windowed image (for the report). */
export function pngDataUrl(image: DisplayImage, window: DisplayWindow): string {
  return canvasOf(image, window).toDataURL('image/png');
}
