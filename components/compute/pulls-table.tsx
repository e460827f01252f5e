import { StyleSheet, View } from 'react-native';
import { Hatted } from '@/components/ui/hatted';
import { Text } from '@/components/ui/text';
import { colors, space } from '@/themes/tokens';
import { fmtFitted } from './limit-summary';

type Pull = { name: string; value: number; error: number; valueAtZero: number };

/** The pull axis runs over ±RANGE prior widths; values beyond it sit at the edge, marked. */
const RANGE = 2.5;
const at = (v: number): `${number}%` => `${((Math.max(-RANGE, Math.min(RANGE, v)) + RANGE) / (2 * RANGE)) * 100}%`;
const span = (lo: number, hi: number) => ({ left: at(lo), width: `${((Math.min(hi, RANGE) - Math.max(lo, -RANGE)) / (2 * RANGE)) * 100}%` }) as const;

/** The ±1σ/±2σ scale of the pulls plot: shaded bands and tick labels. */
function Scale({ labels }: { labels?: boolean }) {
  return (
    <>
      <View style={[styles.band2, span(-2, 2)]} />
      <View style={[styles.band1, span(-1, 1)]} />
      <View style={[styles.zero, { left: at(0) }]} />
      {([-1, 1] as const).map((k) => (
        <View key={k} style={[styles.mark, { left: at(k) }]} />
      ))}
      {labels
        ? ([-2, 0, 2] as const).map((k) => (
            <Text key={k} variant="caption" style={[styles.tick, { left: at(k) }]}>
              {k === 0 ? '0' : `${k > 0 ? '+' : '−'}${Math.abs(k)}σ`}
            </Text>
          ))
        : null}
    </>
  );
}

/**
 * Fitted nuisance parameters in units of their prior width: the numbers, and a small plot per
 * parameter with its post-fit error bar over the ±1σ and ±2σ bands of the prior.
 */
export function PullsTable({ pulls }: { pulls: Pull[] }) {
  if (pulls.length === 0) return <Text variant="muted">No nuisance parameters in this model.</Text>;
  return (
    <View role="table" aria-label="Fitted nuisance parameters">
      <View style={[styles.row, styles.head]} role="row">
        <Text variant="label" style={styles.name}>Nuisance parameter</Text>
        <Text variant="label" style={styles.num}>
          <Hatted letter="θ" /> ± σ
        </Text>
        <Text variant="label" style={styles.num}>
          <Hatted letter="θ" /> (μ = 0)
        </Text>
        <View style={[styles.plot, styles.scaleHead]} aria-label="Pull scale from minus 2 sigma to plus 2 sigma">
          <Scale labels />
        </View>
      </View>
      {pulls.map((p) => {
        const outside = Math.abs(p.value) > RANGE;
        return (
          <View key={p.name} style={styles.row} role="row">
            <Text style={styles.name}>{p.name}</Text>
            <Text style={styles.num}>
              {fmtFitted(p.value, 2)} ± {fmtFitted(p.error, 2)}
            </Text>
            <Text style={styles.num}>{fmtFitted(p.valueAtZero, 2)}</Text>
            <View style={styles.plot} aria-label={`Pull of ${p.name}: ${fmtFitted(p.value, 2)} plus or minus ${fmtFitted(p.error, 2)} prior widths${outside ? ', outside the plotted range' : ''}`}>
              <Scale />
              <View style={[styles.errorBar, span(p.value - p.error, p.value + p.error)]} />
              <View style={[styles.dot, outside && styles.dotOutside, { left: at(p.value) }]} />
            </View>
          </View>
        );
      })}
    </View>
  );
}

const styles = StyleSheet.create({
  row: { flexDirection: 'row', alignItems: 'center', gap: space.sm, paddingVertical: space.xs, borderBottomWidth: 1, borderBottomColor: colors.border },
  head: { borderBottomColor: colors.borderStrong, alignItems: 'flex-end' },
  name: { flex: 2, minWidth: 0 },
  num: { flex: 1.3, minWidth: 0, textAlign: 'right', fontSize: 14 },
  plot: { width: 120, height: 16, position: 'relative', justifyContent: 'center' },
  scaleHead: { height: 22 },
  band2: { position: 'absolute', top: 0, bottom: 0, backgroundColor: colors.warningSoft },
  band1: { position: 'absolute', top: 0, bottom: 0, backgroundColor: colors.successSoft },
  mark: { position: 'absolute', bottom: 0, height: 4, width: 1, backgroundColor: colors.borderStrong },
  zero: { position: 'absolute', top: 0, bottom: 0, width: 1, backgroundColor: colors.borderStrong },
  tick: { position: 'absolute', top: 2, width: 32, marginLeft: -16, textAlign: 'center', fontSize: 10, lineHeight: 12 },
  errorBar: { position: 'absolute', height: 2, top: 7, backgroundColor: colors.text },
  dot: { position: 'absolute', width: 8, height: 8, top: 4, marginLeft: -4, borderRadius: 4, backgroundColor: colors.primary },
  dotOutside: { backgroundColor: colors.danger },
});
