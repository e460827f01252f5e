/**
 * Figures: the stored spec (what to draw and how), shared by the server (validation, rendering)
 * and the app (composer). Labels are text with TeX math between dollar signs, e.g.
 * "$m_{V'}$ [TeV]" or "$\sigma \times B$ [fb]"; the server typesets them (plain text in the theme's
 * font, math with MathJax) so every output shows the same glyphs.
 */
import { z } from 'zod';
import { intField, intParam, uuidParam } from './common';

import { HUE_COUNT } from '../../themes/figure/palette';
import { FIGURE_THEMES, type FigureTheme } from '../../themes/figure/types';

// The theme names are the themes' own (themes/ is the layer below shared/).
export { FIGURE_THEMES, type FigureTheme };

/**
 * Size presets in centimetres. Journal column widths 8.6 cm and 17.8 cm follow the Physical Review
 * style guide (from memory); slides are 16:9.
 */
export const SIZE_PRESETS = {
  'one-column': { widthCm: 8.6, heightCm: 6.45, label: 'Journal, one column (8.6 cm)' },
  'two-column': { widthCm: 17.8, heightCm: 9.5, label: 'Journal, two columns (17.8 cm)' },
  slide: { widthCm: 25.4, heightCm: 14.2875, label: 'Slide, 16:9 (25.4 cm)' },
  web: { widthCm: 20, heightCm: 13, label: 'Web page (20 cm)' },
} as const;
export type SizePreset = keyof typeof SIZE_PRESETS | 'custom';
export const SIZE_PRESET_IDS = [...(Object.keys(SIZE_PRESETS) as (keyof typeof SIZE_PRESETS)[]), 'custom'] as const;

/** Limits that keep renders sane (absurd sizes and DPIs are refused). */
/**
 * `maxLayers`: curves on one limit plot; `maxBars`: bars (layers) of a summary of excluded ranges.
 */
export const FIGURE_LIMITS = { minCm: 3, maxCm: 60, maxLayers: 12, maxBars: 60, maxAnnotations: 10, maxLabel: 200, minDpi: 36, maxDpi: 1200 } as const;

/**
 * Text that can be stored and drawn: no control characters but tab and line breaks (PostgreSQL
 * cannot store NUL in text or JSON at all), no unpaired UTF-16 surrogates (not Unicode text).
 */
// eslint-disable-next-line no-control-regex -- the control characters PostgreSQL or a page cannot take
const UNSTORABLE = /[\u0000-\u0008\u000b\u000c\u000e-\u001f\u007f]|[\ud800-\udbff](?![\udc00-\udfff])|(?<![\ud800-\udbff])[\udc00-\udfff]/;
export const storableText = <T extends z.ZodString>(s: T) => s.refine((v) => !UNSTORABLE.test(v), 'must not contain control characters (such as NUL) or broken Unicode');

const label = storableText(z.string().max(FIGURE_LIMITS.maxLabel, `must be at most ${FIGURE_LIMITS.maxLabel} characters`));
const finite = z.number({ error: 'must be a number' }).refine(Number.isFinite, 'must be a finite number');

export const axisSchema = z.object({
  scale: z.enum(['linear', 'log'], { error: 'must be "linear" or "log"' }),
  /** Fixed range ends; null = automatic from the data. */
  min: finite.nullable().default(null),
  max: finite.nullable().default(null),
  /** Axis title; empty = automatic from the results' parameter or limited quantity. */
  label: label.default(''),
});
export type AxisSpec = z.output<typeof axisSchema>;

/** Which parts of a result a layer shows. */
export const layerPartsSchema = z.object({
  observed: z.boolean().default(true),
  expected: z.boolean().default(true),
  band1: z.boolean().default(true),
  band2: z.boolean().default(true),
  theory: z.boolean().default(true),
  theoryBand: z.boolean().default(true),
  crossings: z.boolean().default(false),
});
export type LayerParts = z.output<typeof layerPartsSchema>;

/** Line styles of a layer's observed limit. */
export const LINE_STYLES = ['solid', 'dashed', 'dotted', 'dashdot'] as const;
export type LineStyle = (typeof LINE_STYLES)[number];

export const layerSchema = z.object({
  resultId: z.uuid('must be a result id'),
  /** The pinned result version: the figure draws exactly this one. */
  version: intField({ min: 1 }),
  /** Legend entry; empty = the result's title. */
  label: label.default(''),
  show: layerPartsSchema.default({ observed: true, expected: true, band1: true, band2: true, theory: true, theoryBand: true, crossings: false }),
  /** Palette index override; null = the hue the group gave this result. */
  hue: z.number().int().min(0).max(HUE_COUNT - 1).nullable().default(null),
  /** A free colour (#rrggbb, e.g. from the composer's hue slider) that wins over `hue`; null = the palette's. */
  color: z.string().regex(/^#[0-9a-fA-F]{6}$/, 'must be a colour like #1b3f8b').nullable().default(null),
  /** How the observed line is drawn (the expected line stays dashed in the theme's own pattern). */
  lineStyle: z.enum(LINE_STYLES, { error: `must be one of ${LINE_STYLES.join(', ')}` }).default('solid'),
  /** Name of this layer's theory curve in the legend; empty = the result's own name for it. */
  theoryLabel: label.default(''),
  /**
   * For a best-expected envelope: draw the observed line in the layer's colour (`layer`) or in
   * stretches coloured by the input the envelope takes there (`input`, a legend row per input).
   */
  observedColors: z.enum(['layer', 'input'], { error: 'must be "layer" or "input"' }).default('layer'),
  /**
   * The note beside this layer's bar in a summary of excluded ranges (e.g. "140 fb$^{-1}$, 2031
   * data"); empty = its luminosity. Limit plots do not draw it.
   */
  note: label.default(''),
});
export type LayerSpec = z.output<typeof layerSchema>;

/**
 * What a figure draws: `limits`, the limit curves against the parameter (the default),
 * `ranges`, a summary of excluded ranges: one horizontal bar per layer over the parameter axis,
 * its observed excluded range(s) against its theory filled and the expected one outlined, or
 * `plane`, results over two parameters: the first layer's observed limit as a colour map and
 * every layer's contour lines (`spec.y` is then the second parameter's axis).
 */
export const FIGURE_KINDS = ['limits', 'ranges', 'plane'] as const;
export type FigureKind = (typeof FIGURE_KINDS)[number];
export const FIGURE_KIND_LABELS: Record<FigureKind, string> = { limits: 'Limit plot', ranges: 'Summary of excluded ranges', plane: 'Two-parameter plane' };

/** Whether a kind draws results over two parameters (its layers pin such versions only). */
export const isPlaneKind = (kind: FigureKind) => kind === 'plane';

/** Cells of the plane with no point (e.g. a kinematically forbidden corner): left blank or drawn in grey. */
export const PLANE_FORBIDDEN_STYLES = ['blank', 'drawn'] as const;
/** How the excluded side of the observed contour is marked: short hatch ticks, a light shading, or not at all. */
export const PLANE_EXCLUDED_MARKS = ['hatch', 'shade', 'none'] as const;
export const PLANE_EXCLUDED_MARK_LABELS: Record<(typeof PLANE_EXCLUDED_MARKS)[number], string> = { hatch: 'Hatch ticks on the excluded side', shade: 'Light shading', none: 'Not marked' };

export const planeOptionsSchema = z.object({
  /** The first layer's observed limit as a colour map (log colour scale, with a colour bar). */
  colorMap: z.boolean().default(true),
  forbidden: z.enum(PLANE_FORBIDDEN_STYLES, { error: `must be one of ${PLANE_FORBIDDEN_STYLES.join(', ')}` }).default('blank'),
  excludedMark: z.enum(PLANE_EXCLUDED_MARKS, { error: `must be one of ${PLANE_EXCLUDED_MARKS.join(', ')}` }).default('hatch'),
});
export type PlaneOptions = z.output<typeof planeOptionsSchema>;
export const DEFAULT_PLANE_OPTIONS: PlaneOptions = { colorMap: true, forbidden: 'blank', excludedMark: 'hatch' };

/** How bars of a summary of excluded ranges are ordered (within each model when grouped). */
export const RANGE_SORTS = ['listed', 'reach', 'title'] as const;
export type RangeSort = (typeof RANGE_SORTS)[number];
export const RANGE_SORT_LABELS: Record<RangeSort, string> = { listed: 'As listed', reach: 'Furthest observed reach first', title: 'By title (A–Z)' };
/** How the expected excluded range is drawn: an outline around the bar, end markers, or not at all. */
export const RANGE_EXPECTED_STYLES = ['outline', 'marker', 'none'] as const;

export const rangesOptionsSchema = z.object({
  sort: z.enum(RANGE_SORTS, { error: `must be one of ${RANGE_SORTS.join(', ')}` }).default('listed'),
  /** Bars under a heading per model (the results' `model`), models in order of first appearance. */
  groupByModel: z.boolean().default(true),
  expected: z.enum(RANGE_EXPECTED_STYLES, { error: `must be one of ${RANGE_EXPECTED_STYLES.join(', ')}` }).default('outline'),
  /** A note beside each bar (the layer's `note`, else its luminosity). */
  notes: z.boolean().default(true),
});
export type RangesOptions = z.output<typeof rangesOptionsSchema>;
export const DEFAULT_RANGES_OPTIONS: RangesOptions = { sort: 'listed', groupByModel: true, expected: 'outline', notes: true };

export const LEGEND_POSITIONS = ['auto', 'top-left', 'top-right', 'bottom-left', 'bottom-right', 'none'] as const;

export const annotationSchema = z.object({
  text: label.min(1, 'must not be empty'),
  /** Position in axes fractions (0 = left/bottom, 1 = right/top). */
  x: z.number().min(0).max(1).default(0.05),
  y: z.number().min(0).max(1).default(0.95),
});

/** A group's house style, applied on top of the theme. */
export const houseStyleSchema = z.object({
  font: z.enum(['sans', 'serif']).optional(),
  /** Up to HUE_COUNT (12) colours (#rrggbb) replacing the theme's layer palette, in order. */
  palette: z.array(z.string().regex(/^#[0-9a-fA-F]{6}$/, 'must be a colour like #1b3f8b')).min(2).max(HUE_COUNT).optional(),
  /** Multiplies every line width of the theme. */
  lineScale: z.number().min(0.5).max(3).optional(),
  /** Multiplies every type size of the theme. */
  typeScale: z.number().min(0.6).max(2).optional(),
});
export type HouseStyle = z.output<typeof houseStyleSchema>;

export const figureSpecSchema = z
  .object({
    title: storableText(z.string().trim().min(1, 'must not be empty').max(200, 'must be at most 200 characters')),
    kind: z.enum(FIGURE_KINDS, { error: `must be one of ${FIGURE_KINDS.join(', ')}` }).default('limits'),
    /** Options of the `ranges` kind (kept, unused, on a limit plot). */
    ranges: rangesOptionsSchema.default(DEFAULT_RANGES_OPTIONS),
    /** Options of the `plane` kind (kept, unused, on the other kinds). */
    plane: planeOptionsSchema.default(DEFAULT_PLANE_OPTIONS),
    theme: z.enum(FIGURE_THEMES, { error: `must be one of ${FIGURE_THEMES.join(', ')}` }),
    size: z.object({
      preset: z.enum(SIZE_PRESET_IDS, { error: `must be one of ${SIZE_PRESET_IDS.join(', ')}` }),
      widthCm: z.number().min(FIGURE_LIMITS.minCm).max(FIGURE_LIMITS.maxCm).optional(),
      heightCm: z.number().min(FIGURE_LIMITS.minCm).max(FIGURE_LIMITS.maxCm).optional(),
    }),
    x: axisSchema.default({ scale: 'linear', min: null, max: null, label: '' }),
    y: axisSchema.default({ scale: 'log', min: null, max: null, label: '' }),
    layers: z.array(layerSchema).max(FIGURE_LIMITS.maxBars, `at most ${FIGURE_LIMITS.maxBars} layers (bars of a summary of excluded ranges; ${FIGURE_LIMITS.maxLayers} on a limit plot)`),
    /**
     * Older specs: the one layer that carries the ±1σ/±2σ bands; null = none. Read only when
     * `bandsLayers` is absent (see `bandsLayersOf`); writers keep it at the first of `bandsLayers`.
     */
    bandsLayer: z.number().int().min(0).nullable().default(0),
    /** The layers that carry the ±1σ/±2σ bands (any number); absent = `[bandsLayer]` (older specs). */
    bandsLayers: z.array(z.number().int().min(0)).max(FIGURE_LIMITS.maxLayers).optional(),
    legend: z
      .object({ position: z.enum(LEGEND_POSITIONS).default('auto'), columns: z.union([z.literal(1), z.literal(2)]).default(1) })
      .default({ position: 'auto', columns: 1 }),
    annotations: z.array(annotationSchema).max(FIGURE_LIMITS.maxAnnotations).default([]),
    /** "√s = 18 TeV, 140 fb⁻¹" from the layers' provenance. */
    energyLabel: z.boolean().default(true),
    /** "95% CL" (or the layers' confidence level). */
    clLabel: z.boolean().default(true),
    /** Shade the region the first layer's observed limit excludes (against its theory curve). */
    excludedShading: z.boolean().default(false),
  })
  .superRefine((s, ctx) => {
    if (s.layers.length > layerLimit(s.kind)) ctx.addIssue({ code: 'custom', path: ['layers'], message: `a limit plot has at most ${FIGURE_LIMITS.maxLayers} layers (a summary of excluded ranges up to ${FIGURE_LIMITS.maxBars})` });
    if (s.size.preset === 'custom' && (s.size.widthCm === undefined || s.size.heightCm === undefined)) {
      ctx.addIssue({ code: 'custom', path: ['size'], message: 'a custom size needs widthCm and heightCm' });
    }
    if (s.bandsLayer !== null && s.bandsLayer >= Math.max(1, s.layers.length) && s.layers.length > 0) {
      ctx.addIssue({ code: 'custom', path: ['bandsLayer'], message: `must point at one of the ${s.layers.length} layers` });
    }
    (s.bandsLayers ?? []).forEach((b, i, all) => {
      if (b >= s.layers.length) ctx.addIssue({ code: 'custom', path: ['bandsLayers', i], message: `must point at one of the ${s.layers.length} layers` });
      else if (all.indexOf(b) !== i) ctx.addIssue({ code: 'custom', path: ['bandsLayers', i], message: 'names a layer twice' });
    });
    for (const axis of ['x', 'y'] as const) {
      const a = s[axis];
      if (a.min !== null && a.max !== null && !(a.max > a.min)) ctx.addIssue({ code: 'custom', path: [axis, 'max'], message: 'must be larger than min' });
      if (a.scale === 'log' && a.min !== null && !(a.min > 0)) ctx.addIssue({ code: 'custom', path: [axis, 'min'], message: 'must be positive on a log axis' });
    }
  });
export type FigureSpec = z.output<typeof figureSpecSchema>;
export type FigureSpecInput = z.input<typeof figureSpecSchema>;

/** How many layers a figure of this kind may have. */
export function layerLimit(kind: FigureKind): number {
  return kind === 'ranges' ? FIGURE_LIMITS.maxBars : FIGURE_LIMITS.maxLayers;
}

/** The layers that carry the expected bands: `bandsLayers`, or for older specs the one `bandsLayer`. */
export function bandsLayersOf(spec: Pick<FigureSpec, 'bandsLayer' | 'bandsLayers'>): number[] {
  if (spec.bandsLayers) return spec.bandsLayers;
  return spec.bandsLayer === null ? [] : [spec.bandsLayer];
}

/** The page size of a spec in centimetres. */
export function figureSizeCm(spec: Pick<FigureSpec, 'size'>): { widthCm: number; heightCm: number } {
  if (spec.size.preset === 'custom') return { widthCm: spec.size.widthCm!, heightCm: spec.size.heightCm! };
  const p = SIZE_PRESETS[spec.size.preset];
  return { widthCm: spec.size.widthCm ?? p.widthCm, heightCm: spec.size.heightCm ?? p.heightCm };
}

export const createFigureSchema = z.object({ spec: figureSpecSchema, public: z.boolean().default(false) });
export const saveFigureSchema = z.object({ spec: figureSpecSchema, note: storableText(z.string().trim().max(300)).default('') });
export const figureParams = z.object({ groupId: uuidParam, figureId: uuidParam });

/**
 * PNG resolutions a figure offers to the public (and whose renders are cached); members may ask
 * for any resolution within FIGURE_LIMITS.
 */
export const OFFERED_DPIS = [72, 96, 150, 300, 600] as const;

export const RENDER_FORMATS = ['svg', 'pdf', 'png'] as const;
export type RenderFormat = (typeof RENDER_FORMATS)[number];
/**
 * Query of the render routes: version (default: latest), size preset override, PNG resolution,
 * and `download=1` to have the file saved (Content-Disposition: attachment) rather than shown.
 */
export const renderQuery = z.object({
  version: intParam({ min: 1 }).optional(),
  size: z.enum(SIZE_PRESET_IDS).exclude(['custom']).optional(),
  dpi: intParam({ min: FIGURE_LIMITS.minDpi, max: FIGURE_LIMITS.maxDpi }).default(300),
  download: z.enum(['0', '1']).optional().meta({ description: '1: answer as an attachment to save (Content-Disposition: attachment), not to show.' }),
});

/** How an SVG render draws its labels: glyph outlines (looks the same everywhere) or editable text. */
export const SVG_TEXT_MODES = ['outline', 'editable'] as const;
/** Query of the SVG render routes: the render query and `text` (default outline). */
export const svgRenderQuery = renderQuery.extend({
  text: z.enum(SVG_TEXT_MODES).default('outline').meta({ description: '`outline` (default): labels as glyph outlines; `editable`: labels as SVG text in the shipped fonts (Inter, Source Serif 4), to edit in a vector editor.' }),
});
