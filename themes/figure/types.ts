/**
 * The shape of a figure theme: every size, line width, colour and word a figure takes from its
 * theme. Pure data; `shared/figure` resolves it (with a group's house style) and draws with it.
 * Sizes and widths are points (1/72 inch) at the figure's final size.
 */

/** The figure themes by name (the spec's `theme` field takes one of these). */
export const FIGURE_THEMES = ['publication', 'slides', 'outreach'] as const;
export type FigureTheme = (typeof FIGURE_THEMES)[number];

/** The two type families a figure draws with (they ship with the app). */
export type FontRole = 'sans' | 'serif';

/**
 * Legend and label wording. `{layer}` is a layer's name, `{cl}` the confidence level in percent,
 * `{sqrtS}` the centre-of-mass energy in TeV, `{lumi}` the integrated luminosity in fb⁻¹, `{name}`
 * and `{unit}` a parameter's name and unit. Text may hold TeX math between dollar signs.
 */
export type FigureWords = {
  observed: string;
  expected: string;
  band1: string;
  band2: string;
  /** The same entries when several layers share the legend and a layer shows one part only. */
  observedOf: string;
  expectedOf: string;
  band1Of: string;
  band2Of: string;
  /** A layer's further parts, beneath its first row (short: that row names the layer). */
  observedPart: string;
  expectedPart: string;
  band1Part: string;
  band2Part: string;
  /** After "observed" on an envelope layer drawn by input (`{input}`: the input's title). */
  fromInput: string;
  /** A layer's name with its own luminosity (`{layer}`, `{lumi}`), when the layers' luminosities differ. */
  layerLumi: string;
  theory: string;
  excluded: string;
  /** The confidence-level line. */
  cl: string;
  /** One energy and luminosity. */
  energy: string;
  /** An energy alone, when its layers differ in luminosity (each layer's is then in the legend). */
  energyOnly: string;
  /** One line saying what the curves mean (plain-language themes), or null for none. */
  explainLimit: string | null;
  /** Axis titles used when the spec leaves them empty. */
  xAxis: string;
  xAxisNoUnit: string;
  /** Replaces a mass-like parameter name on the x axis (plain-language themes only). */
  massAxis: string | null;
  yXsec: string;
  yMu: string;
  /** Notes about layers the viewer may not see (`{n}` = how many). */
  hiddenOne: string;
  hiddenMany: string;
  /** A layer drawn in the axis's units (`{layer}`, `{change}` such as "GeV → TeV"). */
  unitsConverted: string;
  /** A layer whose units cannot be put on the axis (`{layer}`, `{reason}`). */
  unitsRefused: string;
  /** Summary of excluded ranges: the legend rows of the filled bar, the expected outline and an open end. */
  rangesObserved: string;
  rangesExpected: string;
  rangesOpen: string;
  /** A bar with no theory curve to compare with, or with nothing excluded. */
  rangesNoTheory: string;
  rangesNothing: string;
  /** A bar whose limit cannot be compared with its stored theory curve (grids that do not overlap, bad values). */
  rangesIncomparable: string;
  /** A bar's automatic note (`{lumi}` in fb⁻¹, `{sqrtS}` in TeV). */
  rangesNote: string;
  /** The heading of bars whose results name no model. */
  rangesNoModel: string;
  /** More bars than the page has room for (`{n}`). */
  rangesCrowded: string;
  /** One line saying what the bars mean (plain-language themes), or null for none. */
  rangesExplain: string | null;
  /**
   * Two-parameter plane: the legend rows of a layer's contour lines (alone; with several layers
   * `planeOf` puts the layer's name before the part, `{layer}` and `{part}`), the marked excluded
   * side, cells with no point, the colour bar's title (`{cl}`, `{unit}`) and the second axis.
   */
  planeObserved: string;
  planeExpected: string;
  planeBand: string;
  planeTheory: string;
  planeOf: string;
  planeExcludedSide: string;
  planeForbidden: string;
  planeLimitXsec: string;
  planeLimitMu: string;
  /** One line saying what the lines mean (plain-language themes), or null for none. */
  planeExplain: string | null;
};

/** One figure theme's tokens. */
export type FigureThemeTokens = {
  name: FigureTheme;
  font: FontRole;
  /** Type sizes in points. */
  type: { tick: number; axisTitle: number; legend: number; annotation: number; note: number };
  /** Line widths in points. */
  lines: { observed: number; expected: number; theory: number; frame: number; tick: number; grid: number; legendFrame: number; marker: number };
  /** Dash patterns in points (before the house style's line scale). */
  dash: { expected: number[]; theory: number[][]; observed: { dashed: number[]; dotted: number[]; dashdot: number[] } };
  /** Radius of a crossing marker, points. */
  markerRadius: number;
  /**
   * Tick lengths; `plainDecades`: a log axis spanning at most this many decades (within
   * 0.001…10000) writes its decades as plain numbers, beyond that as powers of ten.
   */
  ticks: { major: number; minor: number; direction: 'in' | 'out'; mirror: boolean; plainDecades: number };
  /** Gaps in points: figure edge, tick label ↔ axis, axis title ↔ tick labels, legend inner padding and inset from the frame. */
  spacing: { edge: number; tickLabel: number; title: number; legendPad: number; legendInset: number; legendKey: number; legendRow: number; legendColumn: number };
  /** Layer colours, in the order results take them (`hue` indexes this list). */
  palette: readonly string[];
  colors: {
    background: string;
    text: string;
    muted: string;
    frame: string;
    grid: string;
    theory: string;
    theoryBand: string;
    excluded: string;
    legendFill: string;
    legendStroke: string | null;
  };
  /** Band fills as tints of the layer colour towards white (0 = the colour, 1 = white). */
  bandTint: { band1: number; band2: number };
  /** Opacity of the legend background (it sits over the plot). */
  legendOpacity: number;
  grid: boolean;
  /** How many expected bands this theme draws at most (1 = the ±1σ band only). */
  maxBands: 1 | 2;
  words: FigureWords;
};
