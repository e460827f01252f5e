import { useState } from 'react';
import { Pressable, StyleSheet, View } from 'react-native';
import type { FigureLayerInfo } from '@/shared/schemas/figure-views';
import type { FigureLayerData } from '@/shared/figure/types';
import { hueColor, resolveFigureTheme } from '@/shared/figure';
import { layerKindProblem, layerParameters, layerPickerNote } from '@/shared/figure/plan';
import { bandsLayersOf, LINE_STYLES, type FigureSpec, type LayerParts, type LayerSpec, type LineStyle } from '@/shared/schemas/figures';
import { colors, radii, space } from '@/themes/tokens';
import { Banner } from '../ui/banner';
import { Button } from '../ui/button';
import { Checkbox } from '../ui/checkbox';
import { ChoiceGroup } from '../ui/choice-group';
import { Text } from '../ui/text';
import { TextField } from '../ui/text-field';
import { ResultPicker } from '../results/result-picker';
import { addLayer, moveLayer, removeLayer, setLayerBands, updateLayer } from './composer-model';

const PART_LABELS: [keyof LayerParts, string][] = [
  ['observed', 'Observed'],
  ['expected', 'Expected median'],
  ['band1', '±1σ band'],
  ['band2', '±2σ band'],
  ['theory', 'Theory'],
  ['theoryBand', 'Theory band'],
  ['crossings', 'Crossing markers'],
];

const LINE_STYLE_LABELS: Record<LineStyle, string> = { solid: 'Solid', dashed: 'Dashed', dotted: 'Dotted', dashdot: 'Dash-dot' };

/**
 * A layer's colour: the group's colour for the result, one of the palette's (swatches, a radio
 * group), or an own hue in degrees (a free colour, stored as #rrggbb).
 */
function LayerColor({ layer, index, palette, onChange }: { layer: LayerSpec; index: number; palette: readonly string[]; onChange: (patch: Partial<LayerSpec>, mergeKey?: string) => void }) {
  const [hue, setHue] = useState('');
  const n = index + 1;
  const selected = (i: number | null) => layer.color === null && layer.hue === i;
  return (
    <View style={styles.colorBlock}>
      <Text variant="label">Colour of layer {n}</Text>
      <View role="radiogroup" aria-label={`Colour of layer ${n}`} style={styles.swatches}>
        <Pressable
          role="radio"
          aria-checked={selected(null)}
          aria-label={`The result's own colour (layer ${n})`}
          onPress={() => onChange({ hue: null, color: null })}
          style={[styles.auto, selected(null) && styles.swatchOn]}
        >
          <Text variant="caption">Auto</Text>
        </Pressable>
        {palette.map((c, i) => (
          <Pressable
            key={c}
            role="radio"
            aria-checked={selected(i)}
            aria-label={`Palette colour ${i + 1} (layer ${n})`}
            onPress={() => onChange({ hue: i, color: null })}
            style={[styles.swatch, { backgroundColor: c }, selected(i) && styles.swatchOn]}
          />
        ))}
        {layer.color ? <View aria-label={`Own colour ${layer.color} (layer ${n})`} role="img" style={[styles.swatch, styles.swatchOn, { backgroundColor: layer.color }]} /> : null}
      </View>
      <View style={styles.hueRow}>
        <View style={styles.grow}>
          <TextField
            label={`Own hue of layer ${n} (0–359°)`}
            value={hue}
            keyboardType="numeric"
            placeholder="e.g. 140 for a green"
            onChangeText={(t) => {
              setHue(t);
              const v = Number(t);
              if (t.trim() !== '' && Number.isFinite(v)) onChange({ color: hueColor(v) }, `hue-${index}`);
            }}
          />
        </View>
      </View>
    </View>
  );
}

/** The figure's layers: order, which parts show, which layer carries the bands, labels, updates. */
export function LayersPanel({
  spec,
  onChange,
  data,
  info,
  groupId,
  palette,
}: {
  groupId: string;
  /** The layer colours to offer (the group's house palette); default: the theme's. */
  palette?: readonly string[];
  spec: FigureSpec;
  onChange: (next: FigureSpec, mergeKey?: string) => void;
  data: FigureLayerData[] | undefined;
  info: FigureLayerInfo[];
}) {
  const swatches = palette ?? resolveFigureTheme(spec.theme).palette;
  const bands = bandsLayersOf(spec);
  // A summary of excluded ranges draws one bar per layer: its observed and expected ranges only.
  const ranges = spec.kind === 'ranges';
  // A plane draws contour lines per layer: observed, expected (with its ±1σ lines) and the theory variations.
  const plane = spec.kind === 'plane';
  const parts = ranges ? PART_LABELS.filter(([k]) => k === 'observed' || k === 'expected') : plane ? PART_LABELS.filter(([k]) => k === 'observed' || k === 'expected' || k === 'band1' || k === 'theoryBand') : PART_LABELS;
  return (
    <View style={styles.col}>
      {spec.layers.length === 0 ? <Text variant="muted">No layers yet: add results below.</Text> : null}
      {spec.layers.map((layer, i) => {
        const d = data?.[i]?.resultId === layer.resultId && data[i]?.version === layer.version ? data[i] : undefined;
        const title = d && d.available ? d.title : d ? 'A result you may not see' : 'Loading…';
        const latest = info.find((x) => x.resultId === layer.resultId)?.latestPublished ?? null;
        // The same rule saving applies (spec.layers.N): after a change of kind a layer may no longer fit.
        const kindProblem = d && d.available ? layerKindProblem(spec.kind, !!d.plane) : null;
        return (
          <View key={`${layer.resultId}@${layer.version}`} style={styles.layer} role="group" aria-label={`Layer ${i + 1}: ${title}`}>
            <Text variant="label">
              {i + 1}. {title} <Text variant="caption">v{layer.version}</Text>
            </Text>
            {d && !d.available ? <Banner tone="warning" message="This result is not visible to your group any more; it is left out of the figure." /> : null}
            {kindProblem ? <Banner tone="warning" message={`${kindProblem.charAt(0).toUpperCase()}${kindProblem.slice(1)}. Remove this layer or choose another kind of figure; saving refuses it.`} /> : null}
            <TextField
              label={ranges ? `Bar label of layer ${i + 1}` : `Legend label of layer ${i + 1}`}
              value={layer.label}
              placeholder="Empty: the result's title; $…$ for TeX"
              onChangeText={(t) => onChange(updateLayer(spec, i, { label: t }), `label-${i}`)}
            />
            <View style={styles.parts}>
              {parts.map(([k, label]) => (
                <Checkbox
                  key={k}
                  label={`${ranges ? `${label} excluded range` : label} (layer ${i + 1})`}
                  checked={layer.show[k]}
                  onChange={(v) => onChange(updateLayer(spec, i, { show: { ...layer.show, [k]: v } }))}
                />
              ))}
            </View>
            {ranges ? (
              <>
                {d && d.available && !d.theory && d.meta.quantity !== 'mu' ? <Text variant="muted">No theory curve is stored with this result: its bar says “no theory curve, no range”.</Text> : null}
                <TextField
                  label={`Note beside the bar of layer ${i + 1}`}
                  value={layer.note}
                  placeholder="Empty: its luminosity; $…$ for TeX"
                  onChangeText={(t) => onChange(updateLayer(spec, i, { note: t }), `note-${i}`)}
                />
              </>
            ) : plane ? null : (
              <Checkbox label={`Layer ${i + 1} carries the ±1σ/±2σ bands`} checked={bands.includes(i)} onChange={(v) => onChange(setLayerBands(spec, i, v))} />
            )}
            {!ranges && d && d.available && d.sources?.segments.length ? (
              <Checkbox
                label={`Colour the observed line of layer ${i + 1} by the input the envelope takes there`}
                hint="One legend row per input (“from …”); off: the layer's own colour."
                checked={layer.observedColors === 'input'}
                onChange={(v) => onChange(updateLayer(spec, i, { observedColors: v ? 'input' : 'layer' }))}
              />
            ) : null}
            <LayerColor layer={layer} index={i} palette={swatches} onChange={(patch, key) => onChange(updateLayer(spec, i, patch), key)} />
            {ranges || plane ? null : (
              <>
                <Text variant="label">Observed line of layer {i + 1}</Text>
                <ChoiceGroup
                  label={`Observed line style of layer ${i + 1}`}
                  value={layer.lineStyle}
                  choices={LINE_STYLES.map((s) => ({ value: s, label: LINE_STYLE_LABELS[s] }))}
                  onChange={(v) => onChange(updateLayer(spec, i, { lineStyle: v }))}
                />
                <TextField
                  label={`Theory curve name of layer ${i + 1}`}
                  value={layer.theoryLabel}
                  placeholder="Empty: the name given at upload; $…$ for TeX"
                  onChangeText={(t) => onChange(updateLayer(spec, i, { theoryLabel: t }), `theory-${i}`)}
                />
              </>
            )}
            <View style={styles.row}>
              <Button compact variant="secondary" label="Up" accessibilityLabel={`Move layer ${i + 1} up`} disabled={i === 0} onPress={() => onChange(moveLayer(spec, i, -1))} />
              <Button compact variant="secondary" label="Down" accessibilityLabel={`Move layer ${i + 1} down`} disabled={i === spec.layers.length - 1} onPress={() => onChange(moveLayer(spec, i, 1))} />
              <Button compact variant="ghost" label="Remove" accessibilityLabel={`Remove layer ${i + 1}`} onPress={() => onChange(removeLayer(spec, i))} />
              {latest !== null && latest > layer.version ? (
                <Button compact label={`Update to v${latest}`} accessibilityLabel={`Update layer ${i + 1} to its latest published version ${latest}`} onPress={() => onChange(updateLayer(spec, i, { version: latest }))} />
              ) : null}
            </View>
          </View>
        );
      })}
      <ResultPicker
        groupId={groupId}
        parameters={layerParameters(spec.kind)}
        hiddenNote={(n) => layerPickerNote(spec.kind, n)}
        isAdded={(id, version) => spec.layers.some((l) => l.resultId === id && l.version === version)}
        onAdd={(r) => onChange(addLayer(spec, r.id, r.version))}
      />
    </View>
  );
}

const styles = StyleSheet.create({
  col: { gap: space.md },
  layer: { borderWidth: 1, borderColor: colors.border, borderRadius: radii.md, padding: space.md, gap: space.sm },
  parts: { flexDirection: 'row', flexWrap: 'wrap', columnGap: space.md },
  row: { flexDirection: 'row', flexWrap: 'wrap', gap: space.sm },
  grow: { flex: 1, minWidth: 0 },
  colorBlock: { gap: space.xs },
  swatches: { flexDirection: 'row', flexWrap: 'wrap', gap: space.xs, alignItems: 'center' },
  // 32 px targets, with a ring on the chosen one (not colour alone: the ring and aria-checked).
  swatch: { width: 32, height: 32, borderRadius: radii.sm, borderWidth: 2, borderColor: 'transparent' },
  auto: { minWidth: 44, height: 32, borderRadius: radii.sm, borderWidth: 1, borderColor: colors.border, alignItems: 'center', justifyContent: 'center', paddingHorizontal: space.xs },
  swatchOn: { borderColor: colors.text, borderWidth: 3 },
  hueRow: { flexDirection: 'row', gap: space.sm, maxWidth: 360 },
});
