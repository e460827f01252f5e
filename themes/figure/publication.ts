import { FIGURE_NEUTRALS, LAYER_PALETTE } from './palette';
import type { FigureThemeTokens, FigureWords } from './types';

/** Wording with the trade's own terms (publication and slides). */
export const TECHNICAL_WORDS: FigureWords = {
  observed: 'Observed limit',
  expected: 'Expected limit',
  band1: 'Expected $\\pm 1\\sigma$',
  band2: 'Expected $\\pm 2\\sigma$',
  observedOf: '{layer}, observed',
  expectedOf: '{layer}, expected',
  band1Of: '{layer}, expected $\\pm 1\\sigma$',
  band2Of: '{layer}, expected $\\pm 2\\sigma$',
  observedPart: 'observed',
  fromInput: 'from {input}',
  expectedPart: 'expected',
  band1Part: '$\\pm 1\\sigma$',
  band2Part: '$\\pm 2\\sigma$',
  layerLumi: '{layer} ({lumi} fb$^{-1}$)',
  theory: 'Theory',
  excluded: 'Excluded (observed)',
  cl: '{cl}% CL',
  energy: '$\\sqrt{s}$ = {sqrtS} TeV, {lumi} fb$^{-1}$',
  energyOnly: '$\\sqrt{s}$ = {sqrtS} TeV',
  explainLimit: null,
  xAxis: '{name} [{unit}]',
  xAxisNoUnit: '{name}',
  massAxis: null,
  yXsec: '$\\sigma \\times B$ [{unit}]',
  yMu: 'Signal strength $\\mu$',
  hiddenOne: '1 layer is not shown: you may not see its result',
  hiddenMany: '{n} layers are not shown: you may not see their results',
  unitsConverted: '{layer}: converted to the axis units ({change})',
  unitsRefused: '{layer} is not shown: {reason}',
};

/**
 * Journal figures: type readable at the printed size (7–8 pt on an 8.6 cm column), thin lines,
 * the serif font role to sit with the paper's text, inward ticks on all four sides.
 */
export const publicationTheme: FigureThemeTokens = {
  name: 'publication',
  font: 'serif',
  type: { tick: 7, axisTitle: 8, legend: 7, annotation: 7.5, note: 6 },
  lines: { observed: 1, expected: 1, theory: 0.9, frame: 0.5, tick: 0.5, grid: 0.3, legendFrame: 0.4, marker: 0.6 },
  dash: { expected: [3, 1.8], theory: [[0.8, 1.4], [3, 1.2, 0.8, 1.2]], observed: { dashed: [6, 2], dotted: [1, 1.5], dashdot: [6, 1.5, 1, 1.5] } },
  markerRadius: 1.8,
  ticks: { major: 3.5, minor: 2, direction: 'in', mirror: true, plainDecades: 3 },
  spacing: { edge: 3, tickLabel: 2.5, title: 3, legendPad: 3, legendInset: 6, legendKey: 16, legendRow: 1.5, legendColumn: 8 },
  palette: LAYER_PALETTE,
  colors: { ...FIGURE_NEUTRALS, text: '#111111', muted: '#555555', frame: '#111111', legendStroke: null },
  bandTint: { band1: 0.55, band2: 0.82 },
  legendOpacity: 0.9,
  grid: false,
  maxBands: 2,
  words: TECHNICAL_WORDS,
};
