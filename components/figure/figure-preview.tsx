import { useMemo } from 'react';
import { StyleSheet, View } from 'react-native';
import { buildScene, collectLabels, labelKey, labelsOffPage, resolveFigureTheme, type FigureLayerData, type Glyphs, type Measure } from '@/shared/figure';
import type { FigureSpec, HouseStyle } from '@/shared/schemas/figures';
import { useDebounced } from '@/hooks/use-debounced';
import { useGlyphs } from '@/hooks/use-figures';
import type { UseQueryResult } from '@tanstack/react-query';
import { space } from '@/themes/tokens';
import { Banner } from '../ui/banner';
import { errorMessage } from '../ui/form';
import { Loading } from '../ui/loading';
import { Text } from '../ui/text';
import { SceneView, type Placing } from './scene-view';

/** Layout from the server's typeset metrics, the same ones its renderers use. */
function measureFrom(glyphs: Glyphs): Measure {
  return (label, size, font) => {
    const g = glyphs.get(labelKey({ label, size, font }));
    // Every label is typeset before the scene is built; the estimate only guards a race.
    return g ? { width: g.width, ascent: g.ascent, descent: g.descent } : { width: 0.5 * size * label.length, ascent: 0.75 * size, descent: 0.25 * size };
  };
}

/** The loaded data belongs to these layers (the data may still be for an earlier edit). */
function sameLayers(data: FigureLayerData[], spec: FigureSpec): boolean {
  return data.length === spec.layers.length && data.every((d, i) => d.resultId === spec.layers[i]!.resultId && d.version === spec.layers[i]!.version);
}

/**
 * The live preview: the shared scene builder on the layers' data, drawn with the server's typeset
 * labels, so it is the figure the exports will contain.
 */
export function FigurePreview({ spec, style, data, placing }: { spec: FigureSpec; style: HouseStyle | null; data: UseQueryResult<FigureLayerData[]>; placing?: Placing | null }) {
  const settled = useDebounced(spec, 250);
  const theme = useMemo(() => resolveFigureTheme(settled.theme, style), [settled.theme, style]);
  const labels = useMemo(() => (data.data ? collectLabels(settled, data.data, theme) : []), [settled, data.data, theme]);
  const { glyphs, ready, error } = useGlyphs(labels);
  const scene = useMemo(
    () => (ready && data.data && sameLayers(data.data, settled) ? buildScene(settled, data.data, theme, measureFrom(glyphs)) : null),
    [ready, data.data, settled, theme, glyphs],
  );
  const offPage = useMemo(() => (scene ? labelsOffPage(scene, measureFrom(glyphs)) : []), [scene, glyphs]);
  const texErrors = labels.map((l) => ({ l, g: glyphs.get(labelKey(l)) })).filter((x) => x.g?.error);
  const unique = [...new Map(texErrors.map((x) => [x.l.label, x])).values()];
  return (
    <View style={styles.col}>
      {data.error ? <Banner tone="error" message={errorMessage(data.error)!} /> : null}
      {error ? <Banner tone="error" message={`The labels could not be typeset: ${errorMessage(error)}`} /> : null}
      {!scene && !data.error && !error ? <Loading label="Drawing the preview…" /> : null}
      {placing ? <Banner tone="info" message={`Press or drag on the preview to place annotation ${placing.index + 1}; its “across” and “up” fields change with it.`} /> : null}
      {scene ? <SceneView scene={scene} glyphs={glyphs} placing={placing} accessibilityLabel={`Preview of the figure “${settled.title}” with ${settled.layers.length} layer(s)`} /> : null}
      {scene?.notes.map((n) => (
        <Banner key={n} tone="warning" message={n} />
      ))}
      {scene?.oversizeLabels.map((o) => (
        <Banner key={o.field} tone="error" message={`${o.message} This figure cannot be saved or drawn until then.`} />
      ))}
      {offPage.length > 0 ? (
        <Banner
          tone="warning"
          message={`${offPage.length === 1 ? 'A label sticks' : `${offPage.length} labels stick`} out of the page at this size (${offPage.slice(0, 2).map((l) => `“${l}”`).join(', ')}${offPage.length > 2 ? ', …' : ''}): choose a larger size, another theme or shorter words.`}
        />
      ) : null}
      {unique.map(({ l, g }) => (
        <Banner key={l.label} tone="warning" message={`The TeX in “${l.label}” could not be read (${g!.error}); it is shown as plain text.`} />
      ))}
      {settled.layers.length === 0 ? <Text variant="muted">Add results to see them drawn.</Text> : null}
    </View>
  );
}

const styles = StyleSheet.create({ col: { gap: space.sm } });
