import { StyleSheet, View } from 'react-native';
import type { ResultVersion } from '@/shared/schemas/results';
import { colors, fonts, space } from '@/themes/tokens';
import { Text } from '../ui/text';
import { formatRanges } from './format';

/**
 * The derived numbers: where the observed and expected limits lie below the stored theory curve
 * (computed by the server with the version), or why there are none.
 */
export function ExclusionSummary({ version }: { version: ResultVersion }) {
  const { ranges, problem } = version.exclusion;
  const unit = version.meta.parameterUnit;
  if (!ranges) {
    return (
      <Text variant="muted">
        {problem ?? (version.theory ? 'The excluded range could not be computed for this curve.' : 'No theory curve is stored with this version, so there is no excluded range.')}
      </Text>
    );
  }
  const e = ranges.expected;
  const rows: [string, string][] = [];
  if (ranges.observed) rows.push(['Observed', formatRanges(ranges.observed, unit)]);
  if (ranges.observedTheoryLower) rows.push(['Observed, theory lower edge', formatRanges(ranges.observedTheoryLower, unit)]);
  if (ranges.observedTheoryUpper) rows.push(['Observed, theory upper edge', formatRanges(ranges.observedTheoryUpper, unit)]);
  for (const [k, label] of [['0', 'Expected median'], ['-1', 'Expected −1σ'], ['1', 'Expected +1σ'], ['-2', 'Expected −2σ'], ['2', 'Expected +2σ']] as const) {
    const r = e[k];
    if (r) rows.push([label, formatRanges(r, unit)]);
  }
  return (
    <View style={styles.list}>
      {rows.map(([k, v]) => (
        <View key={k} style={styles.row}>
          <Text style={styles.key}>{k}</Text>
          <Text style={styles.value}>{v}</Text>
        </View>
      ))}
      <Text variant="caption">
        {!version.theory && version.meta.quantity === 'mu'
          ? 'Where the limit on the signal strength lies below μ = 1, the signal as predicted, interpolated linearly in the parameter and in log μ.'
          : `Where the limit lies below the ${version.theory?.label ? `theory curve (${version.theory.label})` : 'theory curve'}, interpolated linearly in the parameter and in log σ.`}{' '}
        “Below” and “above” mark a range that runs into the edge of the computed curves.
      </Text>
    </View>
  );
}

const styles = StyleSheet.create({
  list: { gap: space.sm },
  row: { flexDirection: 'row', flexWrap: 'wrap', columnGap: space.md, rowGap: 2, alignItems: 'baseline' },
  key: { width: 190, fontFamily: fonts.semibold, fontSize: 13, color: colors.textMuted },
  value: { flexGrow: 1, flexBasis: 200, fontSize: 15 },
});
