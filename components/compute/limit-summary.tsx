import { StyleSheet, View } from 'react-native';
import type { ExpectedLimits } from '@/shared/schemas/counting-model';
import { Text } from '@/components/ui/text';
import { colors, fonts, radii, space } from '@/themes/tokens';

export const fmt = (v: number | null | undefined, digits = 3) => (v === null || v === undefined || !Number.isFinite(v) ? '—' : Number(v.toPrecision(digits)).toString());
/**
 * A fitted value (μ̂, θ̂, their errors): the minimiser stops at a tolerance of about 1e-6, so
 * anything smaller in size is numerical noise and reads as 0, not as "-3.1e-17".
 */
export const fmtFitted = (v: number | null | undefined, digits = 3) => (typeof v === 'number' && Math.abs(v) < 1e-6 ? '0' : fmt(v, digits));

/** Observed and expected limits side by side, with the band written out. */
export function LimitSummary({ observed, expected, unit, muHat, observedError, on }: { observed: number; expected: ExpectedLimits; unit: string; muHat?: number; observedError?: number; /** what the limit is on, e.g. "μ" */ on?: string }) {
  const u = unit ? ` ${unit}` : '';
  return (
    <View style={styles.row}>
      <View style={styles.box} role="group" aria-label="Observed limit">
        <Text variant="caption">Observed limit{on ? ` on ${on}` : ''}</Text>
        <Text style={styles.big}>
          {fmt(observed)}
          {observedError ? ` ± ${fmt(observedError, 2)}` : ''}
          {u}
        </Text>
        {muHat !== undefined ? <Text variant="caption">best-fit signal strength: {fmtFitted(muHat)}</Text> : null}
      </View>
      <View style={styles.box} role="group" aria-label="Expected limit">
        <Text variant="caption">Expected median{on ? ` on ${on}` : ''}</Text>
        <Text style={styles.big}>
          {fmt(expected['0'])}
          {u}
        </Text>
        <Text variant="caption">
          ±1σ: {fmt(expected['-1'])}–{fmt(expected['1'])} · ±2σ: {fmt(expected['-2'])}–{fmt(expected['2'])}
        </Text>
      </View>
    </View>
  );
}

const styles = StyleSheet.create({
  row: { flexDirection: 'row', flexWrap: 'wrap', gap: space.md },
  box: { flexGrow: 1, flexBasis: 160, padding: space.md, borderRadius: radii.md, backgroundColor: colors.surfaceAlt, gap: 2 },
  big: { fontFamily: fonts.semibold, fontSize: 22, lineHeight: 28 },
});
