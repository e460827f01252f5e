/**
 * The composer's editing rules as pure functions over a figure spec, with an undo history.
 * Tested in tests/unit/composer-model.test.ts.
 */
import { bandsLayersOf, layerLimit, type FigureSpec, type FigureTheme, type LayerParts, type LayerSpec } from '@/shared/schemas/figures';

export type History = { past: FigureSpec[]; present: FigureSpec; future: FigureSpec[] };
export const UNDO_DEPTH = 30;

export function startHistory(spec: FigureSpec): History {
  return { past: [], present: spec, future: [] };
}

/** Applies an edit; consecutive edits of the same text field (same `mergeKey`) make one undo step. */
export function edit(h: History, next: FigureSpec, mergeKey?: string, lastKey?: string): History {
  if (next === h.present) return h;
  if (mergeKey && mergeKey === lastKey && h.past.length > 0) return { past: h.past, present: next, future: [] };
  return { past: [...h.past, h.present].slice(-UNDO_DEPTH), present: next, future: [] };
}

export function undo(h: History): History {
  const prev = h.past[h.past.length - 1];
  if (!prev) return h;
  return { past: h.past.slice(0, -1), present: prev, future: [h.present, ...h.future] };
}

export function redo(h: History): History {
  const next = h.future[0];
  if (!next) return h;
  return { past: [...h.past, h.present], present: next, future: h.future.slice(1) };
}

const DEFAULT_PARTS: LayerParts = { observed: true, expected: true, band1: true, band2: true, theory: true, theoryBand: true, crossings: false };

/** Adds a result version as the last layer (at most `layerLimit` of the kind; the same version twice is refused). */
export function addLayer(spec: FigureSpec, resultId: string, version: number): FigureSpec {
  if (spec.layers.length >= layerLimit(spec.kind) || spec.layers.some((l) => l.resultId === resultId && l.version === version)) return spec;
  const layer: LayerSpec = { resultId, version, label: '', show: { ...DEFAULT_PARTS }, hue: null, color: null, lineStyle: 'solid', theoryLabel: '', observedColors: 'layer', note: '' };
  const next = { ...spec, layers: [...spec.layers, layer] };
  return spec.layers.length === 0 ? withBands(next, [0]) : next;
}

/**
 * The spec with these layers carrying the bands. A spec that lists them (`bandsLayers`) keeps
 * the list and its first entry in `bandsLayer` for older readers; an older spec (one
 * `bandsLayer`, at most one entry here) stays in its form.
 */
function withBands(spec: FigureSpec, list: number[]): FigureSpec {
  const sorted = [...new Set(list)].sort((a, b) => a - b);
  return spec.bandsLayers ? { ...spec, bandsLayers: sorted, bandsLayer: sorted[0] ?? null } : { ...spec, bandsLayer: sorted[0] ?? null };
}

/** Turns a layer's ±1σ/±2σ bands on or off (any number of layers may carry them). */
export function setLayerBands(spec: FigureSpec, index: number, on: boolean): FigureSpec {
  const list = bandsLayersOf(spec).filter((b) => b !== index);
  const next = on ? [...list, index] : list;
  const sorted = [...new Set(next)].sort((a, b) => a - b);
  return { ...spec, bandsLayers: sorted, bandsLayer: sorted[0] ?? null };
}

/** Removes a layer; the bands stay with their layers (or go to the first when the only bands layer was removed). */
export function removeLayer(spec: FigureSpec, index: number): FigureSpec {
  const layers = spec.layers.filter((_, i) => i !== index);
  const before = bandsLayersOf(spec);
  let bands = before.filter((b) => b !== index).map((b) => (b > index ? b - 1 : b));
  if (bands.length === 0 && before.includes(index) && layers.length) bands = [0];
  return withBands({ ...spec, layers }, bands);
}

/** Moves a layer up (−1) or down (+1); the bands follow the layers that carry them. */
export function moveLayer(spec: FigureSpec, index: number, delta: -1 | 1): FigureSpec {
  const to = index + delta;
  if (to < 0 || to >= spec.layers.length) return spec;
  const layers = [...spec.layers];
  [layers[index], layers[to]] = [layers[to]!, layers[index]!];
  const bands = bandsLayersOf(spec).map((b) => (b === index ? to : b === to ? index : b));
  return withBands({ ...spec, layers }, bands);
}

export function updateLayer(spec: FigureSpec, index: number, patch: Partial<LayerSpec>): FigureSpec {
  return { ...spec, layers: spec.layers.map((l, i) => (i === index ? { ...l, ...patch, show: { ...l.show, ...(patch.show ?? {}) } } : l)) };
}

/** The size each theme is made for. */
export const THEME_SIZE: Record<FigureTheme, Exclude<FigureSpec['size']['preset'], 'custom'>> = { publication: 'one-column', slides: 'slide', outreach: 'web' };

/**
 * Another theme; the size follows to the new theme's usual size when it was the old theme's usual
 * size (slide type on a journal column is unreadable), and stays when someone chose it.
 */
export function withTheme(spec: FigureSpec, theme: FigureTheme): FigureSpec {
  const usual = spec.size.preset === THEME_SIZE[spec.theme] && spec.size.widthCm === undefined && spec.size.heightCm === undefined;
  return { ...spec, theme, size: usual ? { preset: THEME_SIZE[theme] } : spec.size };
}
