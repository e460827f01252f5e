/** The three figure themes by name (see shared/figure `resolveFigureTheme` for house styles). */
import { outreachTheme } from './outreach';
import { publicationTheme } from './publication';
import { slidesTheme } from './slides';
import type { FigureTheme, FigureThemeTokens } from './types';

export { FIGURE_THEMES, type FigureTheme, type FigureThemeTokens, type FigureWords, type FontRole } from './types';
export { HUE_COUNT, LAYER_PALETTE } from './palette';

export const FIGURE_THEME_TOKENS: Record<FigureTheme, FigureThemeTokens> = {
  publication: publicationTheme,
  slides: slidesTheme,
  outreach: outreachTheme,
};
