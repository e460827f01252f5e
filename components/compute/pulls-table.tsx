import { StyleSheet, View } from 'react-native';
import { Text } from '@/components/ui/text';
import { colors, space } from '@/themes/tokens';
import { fmt } from './limit-summary';

type Pull = { name: string; value: number; error: number; valueAtZero: number };

/** Fitted nuisance parameters in units of their prior width, with a small bar per pull. */
export function PullsTable({ pulls }: { pulls: Pull[] }) {
  if (pulls.length === 0) return <Text variant="muted">No nuisance parameters in this model.</Text>;
  return (
    <View role="table" aria-label="Fitted nuisance parameters">
      <View style={[styles.row, styles.head]} role="row">
        <Text variant="label" style={styles.name}>Nuisance parameter</Text>
        <Text variant="label" style={styles.num}>θ̂ ± σ</Text>
        <Text variant="label" style={styles.num}>θ̂ (μ = 0)</Text>
        <Text variant="caption" style={styles.bar}>−2 … +2</Text>
      </View>
      {pulls.map((p) => {
        const pos = Math.max(-2, Math.min(2, p.value));
        return (
          <View key={p.name} style={styles.row} role="row">
            <Text style={styles.name}>{p.name}</Text>
            <Text style={styles.num}>
              {fmt(p.value, 2)} ± {fmt(p.error, 2)}
            </Text>
            <Text style={styles.num}>{fmt(p.valueAtZero, 2)}</Text>
            <View style={styles.bar} aria-hidden>
              <View style={styles.axis} />
              <View style={[styles.dot, { left: `${((pos + 2) / 4) * 100}%` }]} />
            </View>
          </View>
        );
      })}
    </View>
  );
}

const styles = StyleSheet.create({
  row: { flexDirection: 'row', alignItems: 'center', gap: space.sm, paddingVertical: space.xs, borderBottomWidth: 1, borderBottomColor: colors.border },
  head: { borderBottomColor: colors.borderStrong },
  name: { flex: 2, minWidth: 0 },
  num: { flex: 1.3, minWidth: 0, textAlign: 'right', fontSize: 14 },
  bar: { width: 56, height: 12, position: 'relative', justifyContent: 'center' },
  axis: { position: 'absolute', left: '50%', width: 1, height: 12, backgroundColor: colors.borderStrong },
  dot: { position: 'absolute', width: 8, height: 8, marginLeft: -4, borderRadius: 4, backgroundColor: colors.primary },
});
