import { FIGURE_NEUTRALS, LAYER_PALETTE } from './palette';
import type { FigureThemeTokens } from './types';

/**
 * The public: plain words instead of jargon, bigger type, one expected band at most, a light grid
 * to read values off, outward ticks on the left and bottom only.
 */
export const outreachTheme: FigureThemeTokens = {
  name: 'outreach',
  font: 'sans',
  type: { tick: 13, axisTitle: 15, legend: 14, annotation: 14, note: 11 },
  lines: { observed: 3, expected: 2.4, theory: 2.4, frame: 1, tick: 1, grid: 0.7, legendFrame: 0.8, marker: 1.2 },
  dash: { expected: [7, 5], theory: [[2, 4], [7, 3, 2, 3]], observed: { dashed: [14, 5], dotted: [3, 4], dashdot: [14, 4, 3, 4] } },
  markerRadius: 5,
  ticks: { major: 6, minor: 3, direction: 'out', mirror: false, plainDecades: 7 },
  spacing: { edge: 8, tickLabel: 5, title: 7, legendPad: 8, legendInset: 10, legendKey: 34, legendRow: 4, legendColumn: 16 },
  palette: LAYER_PALETTE,
  colors: { ...FIGURE_NEUTRALS, excluded: '#e9e3cf', text: '#1b1e22', muted: '#5f656d', frame: '#6b7078', legendStroke: '#c9ccd1' },
  bandTint: { band1: 0.6, band2: 0.85 },
  legendOpacity: 0.92,
  grid: true,
  maxBands: 1,
  words: {
    observed: 'Observed limit',
    expected: 'Expected limit',
    band1: 'Expected range',
    band2: 'Wider expected range',
    observedOf: '{layer}: observed limit',
    expectedOf: '{layer}: expected limit',
    band1Of: '{layer}: expected range',
    band2Of: '{layer}: wider expected range',
    observedPart: 'observed limit',
    fromInput: 'from the search “{input}”',
    expectedPart: 'expected limit',
    band1Part: 'expected range',
    band2Part: 'wider expected range',
    layerLumi: '{layer}',
    theory: 'Predicted by theory',
    excluded: 'Ruled out by this search',
    cl: '{cl}% confidence',
    energy: 'Collisions at {sqrtS} TeV',
    energyOnly: 'Collisions at {sqrtS} TeV',
    explainLimit: 'Above the observed limit: ruled out',
    xAxis: '{name} [{unit}]',
    xAxisNoUnit: '{name}',
    massAxis: 'Mass of the new particle',
    yXsec: 'How often it would be made [{unit}]',
    yMu: 'Signal size compared with the prediction',
    hiddenOne: '1 result is not shown: you may not see it',
    hiddenMany: '{n} results are not shown: you may not see them',
    unitsConverted: '{layer}: converted to the same units ({change})',
    unitsRefused: '{layer} is not shown: it is measured in other units',
  },
};
