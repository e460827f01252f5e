import { StyleSheet, View } from 'react-native';
import {
  FIGURE_KIND_LABELS,
  FIGURE_KINDS,
  FIGURE_THEMES,
  LEGEND_POSITIONS,
  PLANE_EXCLUDED_MARK_LABELS,
  PLANE_EXCLUDED_MARKS,
  RANGE_SORT_LABELS,
  RANGE_SORTS,
  SIZE_PRESETS,
  type AxisSpec,
  type FigureKind,
  type FigureSpec,
  type FigureTheme,
  type PlaneOptions,
  type RangeSort,
  type RangesOptions,
} from '@/shared/schemas/figures';
import { space } from '@/themes/tokens';
import { withTheme } from './composer-model';
import { Button } from '../ui/button';
import { Checkbox } from '../ui/checkbox';
import { ChoiceGroup } from '../ui/choice-group';
import { Select } from '../ui/select';
import { Text } from '../ui/text';
import { TextField } from '../ui/text-field';

export const THEME_LABELS: Record<FigureTheme, string> = { publication: 'Publication', slides: 'Slides', outreach: 'Outreach (plain words)' };
type Preset = keyof typeof SIZE_PRESETS;

function num(s: string): number | null {
  const t = s.trim().replace(',', '.');
  if (!t) return null;
  const v = Number(t);
  return Number.isFinite(v) ? v : null;
}

const EXPECTED_STYLE_LABELS: Record<RangesOptions['expected'], string> = { outline: 'Outline', marker: 'End markers', none: 'Not shown' };

/** The options of a summary of excluded ranges: order, grouping, the expected range, notes. */
function RangesControls({ options, onChange }: { options: RangesOptions; onChange: (o: RangesOptions) => void }) {
  return (
    <View style={styles.col}>
      <Text variant="label">Bars</Text>
      <Select<RangeSort> label="Order of the bars" value={options.sort} onChange={(sort) => onChange({ ...options, sort })} options={RANGE_SORTS.map((v) => ({ value: v, label: RANGE_SORT_LABELS[v] }))} />
      <Checkbox label="Group the bars by model" checked={options.groupByModel} onChange={(v) => onChange({ ...options, groupByModel: v })} />
      <Text variant="label">Expected excluded range</Text>
      <ChoiceGroup<RangesOptions['expected']>
        label="Expected excluded range"
        value={options.expected}
        onChange={(expected) => onChange({ ...options, expected })}
        choices={(Object.keys(EXPECTED_STYLE_LABELS) as RangesOptions['expected'][]).map((v) => ({ value: v, label: EXPECTED_STYLE_LABELS[v] }))}
      />
      <Checkbox label="A note beside each bar (its luminosity unless the layer has its own)" checked={options.notes} onChange={(v) => onChange({ ...options, notes: v })} />
    </View>
  );
}

/** The options of a two-parameter plane: the colour map, empty cells, the excluded side. */
function PlaneControls({ options, onChange }: { options: PlaneOptions; onChange: (o: PlaneOptions) => void }) {
  return (
    <View style={styles.col}>
      <Text variant="label">Plane</Text>
      <Checkbox label="Colour map of the first layer's observed limit (with a colour bar)" checked={options.colorMap} onChange={(v) => onChange({ ...options, colorMap: v })} />
      <Checkbox label="Draw cells without a point (e.g. a forbidden corner) in grey" checked={options.forbidden === 'drawn'} onChange={(v) => onChange({ ...options, forbidden: v ? 'drawn' : 'blank' })} />
      <Text variant="label">Excluded side of the observed line</Text>
      <ChoiceGroup<PlaneOptions['excludedMark']>
        label="Excluded side of the observed line"
        value={options.excludedMark}
        onChange={(excludedMark) => onChange({ ...options, excludedMark })}
        choices={PLANE_EXCLUDED_MARKS.map((v) => ({ value: v, label: PLANE_EXCLUDED_MARK_LABELS[v] }))}
      />
    </View>
  );
}

/**
 * Another kind of figure. A plane's second axis is a parameter, linear unless chosen: a limit
 * plot's log y axis (its default) is switched to linear on the way in, and back on the way out.
 */
function withKind(spec: FigureSpec, kind: FigureKind): FigureSpec {
  if (kind === 'plane' && spec.kind !== 'plane' && spec.y.scale === 'log' && spec.y.min === null && spec.y.max === null) return { ...spec, kind, y: { ...spec.y, scale: 'linear' } };
  if (kind !== 'plane' && spec.kind === 'plane' && spec.y.scale === 'linear' && spec.y.min === null && spec.y.max === null) return { ...spec, kind, y: { ...spec.y, scale: 'log' } };
  return { ...spec, kind };
}

function AxisControls({ name, axis, onChange, title }: { name: 'x' | 'y'; axis: AxisSpec; onChange: (a: AxisSpec, mergeKey?: string) => void; title?: string }) {
  const label = title ?? (name === 'x' ? 'Horizontal axis' : 'Vertical axis');
  return (
    <View style={styles.col}>
      <Text variant="label">{label}</Text>
      <ChoiceGroup<'linear' | 'log'> label={`${label} scale`} value={axis.scale} onChange={(scale) => onChange({ ...axis, scale })} choices={[{ value: 'linear', label: 'Linear' }, { value: 'log', label: 'Logarithmic' }]} />
      <TextField label={`${label} title`} value={axis.label} placeholder="Empty: automatic; $…$ for TeX" onChangeText={(t) => onChange({ ...axis, label: t }, `${name}-label`)} />
      <View style={styles.row}>
        <View style={styles.grow}>
          <TextField label={`${label} from`} value={axis.min === null ? '' : String(axis.min)} placeholder="auto" inputMode="decimal" onChangeText={(t) => onChange({ ...axis, min: num(t) }, `${name}-min`)} />
        </View>
        <View style={styles.grow}>
          <TextField label={`${label} to`} value={axis.max === null ? '' : String(axis.max)} placeholder="auto" inputMode="decimal" onChangeText={(t) => onChange({ ...axis, max: num(t) }, `${name}-max`)} />
        </View>
      </View>
    </View>
  );
}

/** Theme, size, axes, legend and the free labels of a figure. */
export function StylePanel({
  spec,
  onChange,
  placing,
  onPlace,
}: {
  spec: FigureSpec;
  onChange: (next: FigureSpec, mergeKey?: string) => void;
  /** The annotation being placed with the pointer on the preview, if any. */
  placing?: number | null;
  /** Start (an index) or stop (null) placing an annotation on the preview; the fields stay the keyboard way. */
  onPlace?: (index: number | null) => void;
}) {
  const preset = (spec.size.preset === 'custom' ? 'web' : spec.size.preset) as Preset;
  const ranges = spec.kind === 'ranges';
  return (
    <View style={styles.col}>
      <TextField label="Figure name" value={spec.title} onChangeText={(t) => onChange({ ...spec, title: t }, 'title')} hint="Not drawn: names the figure in lists and downloads" />
      <Text variant="label">Kind of figure</Text>
      <ChoiceGroup<FigureKind> label="Kind of figure" value={spec.kind} onChange={(kind) => onChange(withKind(spec, kind))} choices={FIGURE_KINDS.map((k) => ({ value: k, label: FIGURE_KIND_LABELS[k] }))} />
      <Text variant="label">Theme</Text>
      <ChoiceGroup<FigureTheme> label="Theme" value={spec.theme} onChange={(theme) => onChange(withTheme(spec, theme))} choices={FIGURE_THEMES.map((t) => ({ value: t, label: THEME_LABELS[t] }))} />
      <Select<Preset> label="Size" value={preset} onChange={(p) => onChange({ ...spec, size: { preset: p } })} options={(Object.keys(SIZE_PRESETS) as Preset[]).map((p) => ({ value: p, label: SIZE_PRESETS[p].label }))} />
      {spec.kind === 'plane' ? (
        <>
          <AxisControls name="x" title="First parameter (horizontal)" axis={spec.x} onChange={(x, k) => onChange({ ...spec, x }, k)} />
          <AxisControls name="y" title="Second parameter (vertical)" axis={spec.y} onChange={(y, k) => onChange({ ...spec, y }, k)} />
          <PlaneControls options={spec.plane} onChange={(p) => onChange({ ...spec, plane: p })} />
          <Checkbox label="Legend row" checked={spec.legend.position !== 'none'} onChange={(v) => onChange({ ...spec, legend: { ...spec.legend, position: v ? 'auto' : 'none' } })} />
          <Checkbox label="Energy and luminosity line" checked={spec.energyLabel} onChange={(v) => onChange({ ...spec, energyLabel: v })} />
          <Checkbox label="Confidence level line (e.g. 95% CL)" checked={spec.clLabel} onChange={(v) => onChange({ ...spec, clLabel: v })} />
        </>
      ) : ranges ? (
        <>
          <AxisControls name="x" title="Parameter axis" axis={spec.x} onChange={(x, k) => onChange({ ...spec, x }, k)} />
          <RangesControls options={spec.ranges} onChange={(r) => onChange({ ...spec, ranges: r })} />
          <Checkbox label="Legend row (what filled and outlined bars mean)" checked={spec.legend.position !== 'none'} onChange={(v) => onChange({ ...spec, legend: { ...spec.legend, position: v ? 'auto' : 'none' } })} />
          <Checkbox label="Energy line" checked={spec.energyLabel} onChange={(v) => onChange({ ...spec, energyLabel: v })} />
          <Checkbox label="Confidence level line (e.g. 95% CL)" checked={spec.clLabel} onChange={(v) => onChange({ ...spec, clLabel: v })} />
        </>
      ) : (
        <>
          <AxisControls name="x" axis={spec.x} onChange={(x, k) => onChange({ ...spec, x }, k)} />
          <AxisControls name="y" axis={spec.y} onChange={(y, k) => onChange({ ...spec, y }, k)} />
          <Select<(typeof LEGEND_POSITIONS)[number]>
            label="Legend"
            value={spec.legend.position}
            onChange={(position) => onChange({ ...spec, legend: { ...spec.legend, position } })}
            options={LEGEND_POSITIONS.map((p) => ({ value: p, label: p === 'auto' ? 'Emptiest corner' : p === 'none' ? 'No legend' : p.replace('-', ' ') }))}
          />
          <Checkbox label="Legend in two columns" checked={spec.legend.columns === 2} onChange={(v) => onChange({ ...spec, legend: { ...spec.legend, columns: v ? 2 : 1 } })} />
          <Checkbox label="Energy and luminosity line" checked={spec.energyLabel} onChange={(v) => onChange({ ...spec, energyLabel: v })} />
          <Checkbox label="Confidence level line (e.g. 95% CL)" checked={spec.clLabel} onChange={(v) => onChange({ ...spec, clLabel: v })} />
          <Checkbox label="Shade the excluded region" checked={spec.excludedShading} onChange={(v) => onChange({ ...spec, excludedShading: v })} />
        </>
      )}
      <Text variant="label">Annotations</Text>
      {spec.annotations.map((a, i) => (
        <View key={i} style={styles.col}>
          <TextField label={`Annotation ${i + 1}`} value={a.text} onChangeText={(t) => onChange({ ...spec, annotations: spec.annotations.map((x, k) => (k === i ? { ...x, text: t } : x)) }, `annotation-${i}`)} />
          <View style={styles.row}>
            <View style={styles.grow}>
              <TextField label={`Annotation ${i + 1} across (0–1)`} value={String(a.x)} inputMode="decimal" onChangeText={(t) => onChange({ ...spec, annotations: spec.annotations.map((x, k) => (k === i ? { ...x, x: Math.min(1, Math.max(0, num(t) ?? 0)) } : x)) }, `annotation-x-${i}`)} />
            </View>
            <View style={styles.grow}>
              <TextField label={`Annotation ${i + 1} up (0–1)`} value={String(a.y)} inputMode="decimal" onChangeText={(t) => onChange({ ...spec, annotations: spec.annotations.map((x, k) => (k === i ? { ...x, y: Math.min(1, Math.max(0, num(t) ?? 0)) } : x)) }, `annotation-y-${i}`)} />
            </View>
          </View>
          <View style={styles.row}>
            {onPlace ? (
              <Button
                compact
                variant="secondary"
                label={placing === i ? 'Stop placing' : 'Place on the preview'}
                accessibilityLabel={placing === i ? `Stop placing annotation ${i + 1}` : `Place annotation ${i + 1} on the preview`}
                aria-pressed={placing === i}
                onPress={() => onPlace(placing === i ? null : i)}
              />
            ) : null}
            <Button compact variant="ghost" label="Remove" accessibilityLabel={`Remove annotation ${i + 1}`} onPress={() => onChange({ ...spec, annotations: spec.annotations.filter((_, k) => k !== i) })} />
          </View>
        </View>
      ))}
      {spec.annotations.length < 10 ? (
        <Button compact variant="secondary" label="Add an annotation" style={styles.start} onPress={() => onChange({ ...spec, annotations: [...spec.annotations, { text: 'Annotation', x: 0.05, y: 0.6 }] })} />
      ) : null}
    </View>
  );
}

const styles = StyleSheet.create({
  col: { gap: space.sm },
  row: { flexDirection: 'row', gap: space.sm },
  grow: { flex: 1 },
  start: { alignSelf: 'flex-start' },
});
