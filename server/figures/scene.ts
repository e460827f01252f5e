import { buildScene, captionDraft, figureCsv, labelKey, resolveFigureTheme, sceneToSvg, type FigureLayerData, type Glyphs, type LabelRequest, type OversizeLabel, type Scene, type SvgTextMode } from '../../shared/figure';
import type { FigureSpec, HouseStyle } from '../../shared/schemas/figures';
import { measureFromGlyphs, typesetLabels } from './typeset';

/**
 * The shared scene builder with the server's typesetter: the scene is laid out with the metrics
 * of the glyphs it will draw, and the SVG written with those glyphs. The typesetter is
 * synchronous here, so labels are typeset as the builder measures them (no `collectLabels`
 * batch, which the app needs for its round trip but which would plan the figure twice here);
 * any label drawn without being measured is typeset before writing. `opts.svgText: 'editable'`
 * writes the SVG's labels as text (the download for vector editors); PDF and PNG are drawn from
 * the outline SVG only.
 */
export function buildFigure(spec: FigureSpec, data: FigureLayerData[], style: HouseStyle | null, opts: { svgText?: SvgTextMode } = {}): { scene: Scene; glyphs: Glyphs; svg: string } {
  const theme = resolveFigureTheme(spec.theme, style);
  const glyphs: Glyphs = new Map();
  const scene = buildScene(spec, data, theme, measureFromGlyphs(glyphs));
  const unmeasured: LabelRequest[] = scene.items.flatMap((i) => (i.kind === 'text' && !glyphs.has(labelKey(i)) ? [{ label: i.label, size: i.size, font: i.font }] : []));
  for (const [k, g] of typesetLabels(unmeasured)) glyphs.set(k, g);
  // Repeated glyph outlines drawn once: smaller SVGs and much faster PDFs (see sceneToSvg).
  return { scene, glyphs, svg: sceneToSvg(scene, glyphs, { title: spec.title, reuseGlyphs: true, text: opts.svgText ?? 'outline' }) };
}

/** The labels of a figure whose typeset box no text could have (`Scene.oversizeLabels`), without writing the SVG. */
export function oversizeLabelsOf(spec: FigureSpec, data: FigureLayerData[], style: HouseStyle | null): OversizeLabel[] {
  return buildScene(spec, data, resolveFigureTheme(spec.theme, style), measureFromGlyphs(new Map())).oversizeLabels;
}

export const csvOf = (spec: FigureSpec, data: FigureLayerData[]) => figureCsv(spec, data);
export const captionOf = (spec: FigureSpec, data: FigureLayerData[]) => captionDraft(spec, data);
