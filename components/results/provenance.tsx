import { StyleSheet, View } from 'react-native';
import { METHOD_LABELS, type ResultVersion } from '@/shared/schemas/results';
import { space } from '@/themes/tokens';
import { Text } from '../ui/text';
import { formatBytes } from '@/shared/bytes';
import { conditionsLine, formatDate, parameterLabel, quantityLabel } from './format';

/** Label–value pairs, stacked on phones and side by side when there is room. */
export function Facts({ rows }: { rows: [string, string][] }) {
  return (
    <View style={styles.list}>
      {rows.map(([k, v]) => (
        <View key={k} style={styles.row}>
          <Text variant="caption" style={styles.key}>
            {k}
          </Text>
          <Text style={styles.value}>{v}</Text>
        </View>
      ))}
    </View>
  );
}

/** Where a version's numbers come from: every provenance field, with its units. */
export function Provenance({ version }: { version: ResultVersion }) {
  const m = version.meta;
  const rows: [string, string][] = [
    ['Conditions', conditionsLine(m)],
    ['Model', m.model || '–'],
    ['Parameter', parameterLabel(m)],
    ['Limit on', m.quantity === 'mu' ? 'Signal strength μ' : quantityLabel(m)],
    ['Method', METHOD_LABELS[m.method]],
    ['Reference', m.reference || '–'],
    ['Group', version.groupName],
    ['Created', formatDate(version.createdAt)],
  ];
  if (version.publishedAt) rows.push(['Published', formatDate(version.publishedAt)]);
  if (version.sourceFile) rows.push(['Uploaded file', `${version.sourceFile.name} (${formatBytes(version.sourceFile.bytes)})`]);
  if (version.changeNote) rows.push(['What changed', version.changeNote]);
  return (
    <View style={styles.wrap}>
      <Facts rows={rows} />
      {m.notes ? (
        <View style={styles.notes}>
          <Text variant="caption">Notes</Text>
          <Text>{m.notes}</Text>
        </View>
      ) : null}
    </View>
  );
}

const styles = StyleSheet.create({
  wrap: { gap: space.md },
  list: { gap: space.sm },
  row: { flexDirection: 'row', flexWrap: 'wrap', columnGap: space.md },
  key: { width: 110, paddingTop: 3 },
  value: { flex: 1, minWidth: 160 },
  notes: { gap: 2 },
});
