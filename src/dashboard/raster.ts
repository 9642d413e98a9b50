/** Pixels of a polyline (Bresenham), optionally dotted. Pure; the canvas only sets what this returns. */
import type { Px } from './plot-model.js';

export function rasterizeLine(a: Px, b: Px, out: Array<[number, number]>): void {
  let [x0, y0] = [Math.round(a[0]), Math.round(a[1])];
  const [x1, y1] = [Math.round(b[0]), Math.round(b[1])];
  const dx = Math.abs(x1 - x0);
  const dy = -Math.abs(y1 - y0);
  const sx = x0 < x1 ? 1 : -1;
  const sy = y0 < y1 ? 1 : -1;
  let err = dx + dy;
  for (;;) {
    out.push([x0, y0]);
    if (x0 === x1 && y0 === y1) return;
    const e2 = 2 * err;
    if (e2 >= dy) {
      err += dy;
      x0 += sx;
    }
    if (e2 <= dx) {
      err += dx;
      y0 += sy;
    }
  }
}

/** All pixels of a polyline without repeats at the joints; every `dotEvery`-th one when dotted. */
export function rasterizePolyline(points: readonly Px[], dotEvery = 1): Array<[number, number]> {
  const all: Array<[number, number]> = [];
  if (points.length === 1) all.push([Math.round(points[0]![0]), Math.round(points[0]![1])]);
  for (let i = 1; i < points.length; i++) {
    const seg: Array<[number, number]> = [];
    rasterizeLine(points[i - 1]!, points[i]!, seg);
    if (i > 1) seg.shift();
    all.push(...seg);
  }
  if (dotEvery <= 1) return all;
  return all.filter((_, i) => i % dotEvery === 0);
}
