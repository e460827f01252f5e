/** The three figure themes by name (see shared/figure `resolveFigureTheme` for house styles). */
import type { FigureTheme } from '../../shared/schemas/figures';
import { outreachTheme } from './outreach';
import { publicationTheme } from './publication';
import { slidesTheme } from './slides';
import type { FigureThemeTokens } from './types';

export type { FigureThemeTokens, FigureWords } from './types';
export { LAYER_PALETTE } from './palette';

export const FIGURE_THEME_TOKENS: Record<FigureTheme, FigureThemeTokens> = {
  publication: publicationTheme,
  slides: slidesTheme,
  outreach: outreachTheme,
};
