import { StyleSheet, View } from 'react-native';
import { useIsWide } from '@/hooks/use-layout';
import { colors, radii, space } from '@/themes/tokens';
import { Button } from '../ui/button';
import { Text } from '../ui/text';
import { TextField } from '../ui/text-field';
import { emptyBin, SIGNAL, type DraftErrors, type ModelDraft } from './model-draft';

const MAX_BINS = 30;
const MAX_BACKGROUNDS = 5;
const MAX_SYSTEMATICS = 10;

/**
 * A small counting model typed in: bins (observed, signal, each background), background names and
 * systematic uncertainties in percent per process. Errors appear beside the field they concern.
 */
export function ModelEditor({ draft, onChange, errors }: { draft: ModelDraft; onChange: (d: ModelDraft) => void; errors: DraftErrors }) {
  const wide = useIsWide();
  const setBin = (i: number, patch: Partial<ModelDraft['bins'][number]>) => onChange({ ...draft, bins: draft.bins.map((b, k) => (k === i ? { ...b, ...patch } : b)) });
  const processes = [SIGNAL, ...draft.backgroundNames];
  const num = { inputMode: 'decimal' as const, autoCapitalize: 'none' as const };
  return (
    <View style={styles.col}>
      <Text variant="label">Background processes</Text>
      <View style={styles.wrap}>
        {draft.backgroundNames.map((name, j) => (
          <View key={j} style={styles.bgName}>
            <TextField
              label={`Name of background ${j + 1}`}
              value={name}
              error={errors[`backgroundNames.${j}`]}
              onChangeText={(t) => onChange({ ...draft, backgroundNames: draft.backgroundNames.map((n, k) => (k === j ? t : n)) })}
            />
            {draft.backgroundNames.length > 1 ? (
              <Button
                compact
                variant="ghost"
                label="Remove"
                accessibilityLabel={`Remove background ${name || j + 1}`}
                onPress={() =>
                  onChange({
                    backgroundNames: draft.backgroundNames.filter((_, k) => k !== j),
                    bins: draft.bins.map((b) => ({ ...b, backgrounds: b.backgrounds.filter((_, k) => k !== j) })),
                    systematics: draft.systematics.map((s) => ({ ...s, effects: Object.fromEntries(Object.entries(s.effects).filter(([p]) => p !== name)) })),
                  })
                }
              />
            ) : null}
          </View>
        ))}
      </View>
      {draft.backgroundNames.length < MAX_BACKGROUNDS ? (
        <Button
          compact
          variant="secondary"
          label="Add a background"
          style={styles.start}
          onPress={() => onChange({ ...draft, backgroundNames: [...draft.backgroundNames, `background ${draft.backgroundNames.length + 1}`], bins: draft.bins.map((b) => ({ ...b, backgrounds: [...b.backgrounds, ''] })) })}
        />
      ) : null}

      <Text variant="label">Bins</Text>
      {draft.bins.map((b, i) => (
        <View key={i} style={styles.bin} role="group" aria-label={`Bin ${i + 1}`}>
          <View style={styles.binHead}>
            <Text variant="label">Bin {i + 1}</Text>
            {draft.bins.length > 1 ? (
              <Button compact variant="ghost" label="Remove" accessibilityLabel={`Remove bin ${i + 1}`} onPress={() => onChange({ ...draft, bins: draft.bins.filter((_, k) => k !== i) })} />
            ) : null}
          </View>
          <View style={[styles.fields, wide && styles.fieldsWide]}>
            <View style={styles.field}>
              <TextField label={`Observed, bin ${i + 1}`} value={b.observed} error={errors[`bins.${i}.observed`]} onChangeText={(t) => setBin(i, { observed: t })} {...num} />
            </View>
            <View style={styles.field}>
              <TextField label={`Signal (μ = 1), bin ${i + 1}`} value={b.signal} error={errors[`bins.${i}.signal`]} onChangeText={(t) => setBin(i, { signal: t })} {...num} />
            </View>
            {draft.backgroundNames.map((name, j) => (
              <View key={j} style={styles.field}>
                <TextField
                  label={`${name || `Background ${j + 1}`}, bin ${i + 1}`}
                  value={b.backgrounds[j] ?? ''}
                  error={errors[`bins.${i}.backgrounds.${j}`]}
                  onChangeText={(t) => setBin(i, { backgrounds: b.backgrounds.map((v, k) => (k === j ? t : v)) })}
                  {...num}
                />
              </View>
            ))}
          </View>
        </View>
      ))}
      {draft.bins.length < MAX_BINS ? (
        <Button compact variant="secondary" label="Add a bin" style={styles.start} onPress={() => onChange({ ...draft, bins: [...draft.bins, emptyBin(draft.backgroundNames.length)] })} />
      ) : null}

      <Text variant="label">Systematic uncertainties (nuisance parameters), relative size in %</Text>
      {draft.systematics.map((s, k) => (
        <View key={k} style={styles.bin} role="group" aria-label={`Uncertainty ${s.name || k + 1}`}>
          <View style={[styles.fields, wide && styles.fieldsWide]}>
            <View style={styles.field}>
              <TextField
                label={`Name of uncertainty ${k + 1}`}
                value={s.name}
                error={errors[`systematics.${k}.name`]}
                onChangeText={(t) => onChange({ ...draft, systematics: draft.systematics.map((x, m) => (m === k ? { ...x, name: t } : x)) })}
              />
            </View>
            {processes.map((p) => (
              <View key={p} style={styles.field}>
                <TextField
                  label={`${s.name || `Uncertainty ${k + 1}`} on ${p} (%)`}
                  value={Object.hasOwn(s.effects, p) ? s.effects[p] : ''}
                  error={errors[`systematics.${k}.effects.${p}`]}
                  onChangeText={(t) => onChange({ ...draft, systematics: draft.systematics.map((x, m) => (m === k ? { ...x, effects: { ...x.effects, [p]: t } } : x)) })}
                  {...num}
                />
              </View>
            ))}
          </View>
          <Button compact variant="ghost" label="Remove" style={styles.start} accessibilityLabel={`Remove uncertainty ${s.name || k + 1}`} onPress={() => onChange({ ...draft, systematics: draft.systematics.filter((_, m) => m !== k) })} />
        </View>
      ))}
      {draft.systematics.length < MAX_SYSTEMATICS ? (
        <Button compact variant="secondary" label="Add an uncertainty" style={styles.start} onPress={() => onChange({ ...draft, systematics: [...draft.systematics, { name: '', effects: {} }] })} />
      ) : null}
    </View>
  );
}

const styles = StyleSheet.create({
  col: { gap: space.md },
  wrap: { flexDirection: 'row', flexWrap: 'wrap', gap: space.md },
  bgName: { minWidth: 160, flexGrow: 1, flexBasis: 160 },
  bin: { borderWidth: 1, borderColor: colors.border, borderRadius: radii.md, padding: space.md, gap: space.sm },
  binHead: { flexDirection: 'row', justifyContent: 'space-between', alignItems: 'center' },
  fields: { gap: space.sm },
  fieldsWide: { flexDirection: 'row', flexWrap: 'wrap' },
  field: { flexGrow: 1, flexBasis: 140 },
  start: { alignSelf: 'flex-start' },
});
