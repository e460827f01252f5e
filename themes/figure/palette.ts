/**
 * How many hues a result can have (0 to HUE_COUNT − 1): a group's results take the lowest free one,
 * a layer may override it, and a house style may list up to this many layer colours. A palette
 * shorter than this (LAYER_PALETTE has 8) wraps around.
 */
export const HUE_COUNT = 12;

/**
 * Layer colours shared by the three figure themes, so a result keeps its colour in the paper,
 * the talk and the public page. Our own hues, tuned so that the first six stay apart with normal
 * colour vision (CIEDE2000 ≥ 20), under simulated protanopia and deuteranopia (≥ 10) and in
 * greyscale (lightness steps ≥ 7 L*), see tests/unit/figure/palette.test.ts. Lightness runs from
 * L* ≈ 24 to 69 so that even the lightest line reads on white.
 */
export const LAYER_PALETTE = [
  '#15357f', // deep blue
  '#d4600e', // burnt orange
  '#1c7e67', // pine green
  '#9f1f47', // claret
  '#d2a126', // ochre
  '#7194e0', // cornflower
  '#5c6b1f', // olive (7th and 8th: only checked with normal vision)
  '#6b4a33', // umber
] as const;

/**
 * Neutral colours every theme starts from: white page, a dark neutral theory line with a light
 * band (apart from every layer hue), a light stone shade for the excluded region.
 */
export const FIGURE_NEUTRALS = {
  background: '#ffffff',
  theory: '#4b4f55',
  theoryBand: '#dcdde0',
  excluded: '#ebe6d6',
  legendFill: '#ffffff',
  grid: '#e4e6e9',
} as const;

/**
 * The sequential colours of a two-parameter colour map (low to high on its log scale), our own:
 * deep indigo through teal to pale straw. Lightness rises at every stop (L* ≈ 8 to 90, about 10
 * a step) with normal vision, in greyscale and under simulated protanopia and deuteranopia, so
 * the map reads in print and for colour-blind readers (tests/unit/figure/palette.test.ts). The
 * figure interpolates between the stops in linear light (`rampColor` in shared/figure/color.ts).
 */
export const PLANE_SEQUENTIAL = ['#1a0f3d', '#2c1e6e', '#2f3f94', '#2a629f', '#25829f', '#2fa197', '#62bb85', '#a6d27a', '#eee69c'] as const;

/** Cells of a plane with no point, when the figure draws them (`forbidden: 'drawn'`). */
export const PLANE_FORBIDDEN_FILL = '#c9cbcf';
