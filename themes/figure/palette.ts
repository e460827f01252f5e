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
