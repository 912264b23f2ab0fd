// Image points on the page's image panels: where a point (mm) of the demo's reference grid lies
// on screen at a panel's first view, and drags between such points.

/** The demo's reference grid: 576 px of 1 mm (the recipe form's default "match the ground truth"). */
export const GRID = { n: 576, pixel: 1 };

/** Screen point of image point (x, y) mm on a panel at its first view (the whole grid fits the panel). */
export async function screenPoint(panel, x, y) {
  const b = await panel.locator('canvas').boundingBox();
  const s = Math.min(b.width, b.height) / (GRID.n * GRID.pixel);
  return { x: b.x + b.width / 2 + x * s, y: b.y + b.height / 2 - y * s };
}

/** Drags on a panel from image point a to b (mm). */
export async function drag(page, panel, a, b) {
  await panel.locator('canvas').scrollIntoViewIfNeeded();
  const p = await screenPoint(panel, a.x, a.y), q = await screenPoint(panel, b.x, b.y);
  await page.mouse.move(p.x, p.y);
  await page.mouse.down();
  await page.mouse.move(q.x, q.y, { steps: 4 });
  await page.mouse.up();
}
