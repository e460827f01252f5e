import type { Rect } from './types';

/**
 * Where a point on a drawn figure (in points from the page's top-left corner) puts an annotation:
 * its top-left corner in axes fractions, `x` across from the left and `y` up from the bottom of
 * the plot area, clamped to the plot and rounded to 0.001 (the spec's own form; the scene builder
 * keeps the whole text inside the plot).
 */
export function annotationPlace(plot: Rect, xPt: number, yPt: number): { x: number; y: number } {
  const clamp = (v: number) => Math.round(Math.min(1, Math.max(0, v)) * 1000) / 1000;
  return { x: clamp((xPt - plot.x) / plot.width), y: clamp(1 - (yPt - plot.y) / plot.height) };
}
