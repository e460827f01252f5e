import { publicationTheme } from './publication';
import type { FigureThemeTokens } from './types';

/**
 * Talks: 16:9, large sans type (16–20 pt) that reads from the back of a room, heavier lines;
 * colours, words and tick style as in publications, so a figure moves from paper to talk intact.
 */
export const slidesTheme: FigureThemeTokens = {
  ...publicationTheme,
  name: 'slides',
  font: 'sans',
  type: { tick: 16, axisTitle: 20, legend: 16, annotation: 17, note: 12 },
  lines: { observed: 2.6, expected: 2.6, theory: 2.2, frame: 1.2, tick: 1.2, grid: 0.8, legendFrame: 0.8, marker: 1.2 },
  dash: { expected: [8, 5], theory: [[2, 4], [8, 3, 2, 3]], observed: { dashed: [15, 5], dotted: [2.6, 4], dashdot: [15, 4, 2.6, 4] } },
  markerRadius: 5,
  ticks: { major: 9, minor: 5, direction: 'in', mirror: true, plainDecades: 3 },
  spacing: { edge: 8, tickLabel: 6, title: 8, legendPad: 8, legendInset: 14, legendKey: 38, legendRow: 4, legendColumn: 18 },
};
