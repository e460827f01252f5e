/**
 * The figure scene builder: one pure path from a figure spec, its layers' data and a theme to
 * drawing primitives, used by the app's preview and the server's SVG/PDF/PNG renderers.
 *
 * Typical use: `theme = resolveFigureTheme(spec.theme, house)`, typeset `collectLabels(spec,
 * layers, theme)` in one batch, `scene = buildScene(spec, layers, theme, measure)`, then
 * `sceneToSvg(scene, glyphs, { title })` or draw `scene.items` directly.
 */
export { resolveFigureTheme, layerColor, type ResolvedTheme } from './theme';
export { collectLabels, buildScene, labelsOffPage } from './scene';
export { sceneToSvg, escapeXml, SVG_FONT_FAMILIES, type SvgTextMode } from './svg';
export { figureCsv, captionDraft } from './export';
export { splitLabel, labelPlainText, labelTextRuns, type LabelSegment, type LabelRun } from './labels';
export { outreachSpec } from './outreach';
export { sizePt, layerConversion } from './plan';
export { annotationPlace } from './place';
export { hueColor, paletteProblems, PALETTE_THRESHOLDS } from './color';
export * from './types';
