import { buildScene, captionDraft, collectLabels, figureCsv, resolveFigureTheme, sceneToSvg, type FigureLayerData, type Glyphs, type Scene } from '../../shared/figure';
import type { FigureSpec, HouseStyle } from '../../shared/schemas/figures';
import { measureFromGlyphs, typesetLabels } from './typeset';

/**
 * The shared scene builder with the server's typesetter: every label typeset in one batch, the
 * scene laid out with the same metrics, and the SVG written with the same glyphs.
 */
export function buildFigure(spec: FigureSpec, data: FigureLayerData[], style: HouseStyle | null): { scene: Scene; glyphs: Glyphs; svg: string } {
  const theme = resolveFigureTheme(spec.theme, style);
  const glyphs = typesetLabels(collectLabels(spec, data, theme));
  // measureFromGlyphs typesets (and adds) any label the batch did not list.
  const scene = buildScene(spec, data, theme, measureFromGlyphs(glyphs));
  return { scene, glyphs, svg: sceneToSvg(scene, glyphs, { title: spec.title }) };
}

export const csvOf = (spec: FigureSpec, data: FigureLayerData[]) => figureCsv(spec, data);
export const captionOf = (spec: FigureSpec, data: FigureLayerData[]) => captionDraft(spec, data);
