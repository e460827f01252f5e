/**
 * A figure theme with a group's house style applied: the one set of sizes, widths, colours and
 * words the scene builder draws with.
 */
import { FIGURE_THEME_TOKENS, type FigureThemeTokens } from '../../themes/figure';
import type { FigureTheme, HouseStyle } from '../schemas/figures';

/** A theme after the house style: the same shape as the theme tokens, values final. */
export type ResolvedTheme = Omit<FigureThemeTokens, 'palette'> & {
  palette: string[];
  /** The house style that was applied, if any (kept so callers can show it). */
  house: HouseStyle | null;
};

/** Three decimals: type sizes go into label keys (`labelKey` prints them with three). */
const round3 = (v: number) => Math.round(v * 1000) / 1000;

/**
 * The tokens of `theme` with `house` on top: its font role and palette replace the theme's, its
 * line scale multiplies every line width, dash and marker, its type scale every type size.
 * An unknown theme name falls back to `publication`.
 */
export function resolveFigureTheme(theme: FigureTheme, house?: HouseStyle | null): ResolvedTheme {
  const base = FIGURE_THEME_TOKENS[theme] ?? FIGURE_THEME_TOKENS.publication;
  const ls = house?.lineScale ?? 1;
  const ts = house?.typeScale ?? 1;
  const scaleAll = <K extends string>(o: Record<K, number>, k: number) =>
    Object.fromEntries(Object.entries<number>(o).map(([key, v]) => [key, round3(v * k)])) as Record<K, number>;
  return {
    ...base,
    font: house?.font ?? base.font,
    type: scaleAll(base.type, ts),
    lines: scaleAll(base.lines, ls),
    dash: {
      expected: base.dash.expected.map((d) => round3(d * ls)),
      theory: base.dash.theory.map((p) => p.map((d) => round3(d * ls))),
      observed: { dashed: base.dash.observed.dashed.map((d) => round3(d * ls)), dotted: base.dash.observed.dotted.map((d) => round3(d * ls)), dashdot: base.dash.observed.dashdot.map((d) => round3(d * ls)) },
    },
    markerRadius: round3(base.markerRadius * ls),
    palette: [...(house?.palette && house.palette.length > 0 ? house.palette : base.palette)].map((c) => c.toLowerCase()),
    colors: { ...base.colors },
    words: { ...base.words },
    house: house ?? null,
  };
}

/** A layer's colour: the palette entry at its hue, wrapping around the palette. */
export function layerColor(theme: ResolvedTheme, hue: number): string {
  const n = theme.palette.length;
  const h = Number.isFinite(hue) ? Math.floor(hue) : 0;
  return theme.palette[((h % n) + n) % n] ?? theme.colors.text;
}
