/**
 * The plain-language version of a figure for the public, as a pure transform of its spec.
 */
import { bandsLayersOf, type FigureSpec } from '../schemas/figures';
import { labelPlainText } from './labels';

/** Shortens text to `max` characters, marking the cut with an ellipsis. */
export const clipText = (s: string, max = 200) => (s.length > max ? `${s.slice(0, max - 1)}…` : s);

/**
 * The plain-language version of a spec for the public: the outreach theme (plain words, big
 * type) at slide or web size; axis titles left to the theme's plain wording; TeX taken out of
 * legend entries and notes; one expected band (±1σ, on the first bands layer only); no confidence-level
 * jargon; the excluded region shaded; the energy label kept.
 */
export function outreachSpec(spec: FigureSpec, size: 'web' | 'slide', title?: string): FigureSpec {
  const bandsLayer = spec.layers.length ? (bandsLayersOf(spec)[0] ?? 0) : null;
  return {
    ...spec,
    title: title ?? clipText(`${spec.title} (for the public)`),
    theme: 'outreach',
    size: { preset: size },
    x: { ...spec.x, label: '' },
    y: { ...spec.y, label: '' },
    layers: spec.layers.map((l, i) => ({
      ...l,
      label: clipText(labelPlainText(l.label)),
      note: clipText(labelPlainText(l.note)),
      show: { ...l.show, band1: i === bandsLayer, band2: false, crossings: false },
    })),
    bandsLayer,
    bandsLayers: bandsLayer === null ? [] : [bandsLayer],
    legend: { position: 'auto', columns: 1 },
    annotations: spec.annotations.map((a) => ({ ...a, text: clipText(labelPlainText(a.text)) })).filter((a) => a.text.length > 0),
    energyLabel: true,
    clLabel: false,
    excludedShading: true,
  };
}
