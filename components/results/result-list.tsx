import { Link, type Href } from 'expo-router';
import { Pressable, StyleSheet, View } from 'react-native';
import { METHOD_LABELS, type ResultSummary } from '@/shared/schemas/results';
import { colors, fonts, radii, space } from '@/themes/tokens';
import { Card } from '../ui/card';
import { Text } from '../ui/text';
import { formatDate, formatValue, parameterLabel, parametersBadge, STATE_LABELS } from './format';
import { ParametersBadge, PublicBadge, StateBadge } from './state-badge';

type Props = { items: ResultSummary[]; hrefFor: (item: ResultSummary) => Href; wide: boolean; showGroup?: boolean };

// Link asChild hands its child a merged style: it must be one plain object (an array or a
// function crashes or is dropped on react-native-web).
const rowStyle = StyleSheet.flatten([
  { flexDirection: 'row', alignItems: 'center', paddingHorizontal: space.md, gap: space.sm },
  { minHeight: 56, paddingVertical: space.sm, borderTopWidth: 1, borderTopColor: colors.border },
] as const);

// The row's link name is all a screen reader hears of the row: a plane says so at the end.
const linkName = (r: ResultSummary) => {
  const plane = parametersBadge(r);
  return `${r.title}, ${STATE_LABELS[r.state].toLowerCase()}, version ${r.version}${plane ? `, ${plane.label.charAt(0).toLowerCase()}${plane.label.slice(1)}` : ''}`;
};

/** Results as a table on wide screens and as cards on phones; each row opens its result. */
export function ResultList(props: Props) {
  return props.wide ? <ResultTable {...props} /> : <ResultCards {...props} />;
}

const COLS = [
  { key: 'title', label: 'Title', flex: 3 },
  { key: 'group', label: 'Group', flex: 1.4 },
  { key: 'parameter', label: 'Parameter', flex: 1.1 },
  { key: 'sqrtS', label: '√s', flex: 0.7 },
  { key: 'lumi', label: 'L', flex: 0.8 },
  { key: 'method', label: 'Method', flex: 1.3 },
  { key: 'state', label: 'State', flex: 1.1 },
  { key: 'version', label: 'Ver.', flex: 0.5 },
  { key: 'updated', label: 'Updated', flex: 1.1 },
] as const;

function ResultTable({ items, hrefFor, showGroup = true }: Props) {
  const cols = COLS.filter((c) => showGroup || c.key !== 'group');
  const cell = (key: (typeof COLS)[number]['key'], r: ResultSummary) => {
    switch (key) {
      case 'title':
        return (
          <View style={styles.titleCell}>
            <Text style={styles.title} numberOfLines={2}>
              {r.title}
            </Text>
            {r.model ? (
              <Text variant="caption" numberOfLines={1}>
                {r.model}
              </Text>
            ) : null}
            <ParametersBadge result={r} />
          </View>
        );
      case 'group':
        return <Text style={styles.cellText} numberOfLines={2}>{r.groupName}</Text>;
      case 'parameter':
        return <Text style={styles.cellText} numberOfLines={2}>{parameterLabel(r)}</Text>;
      case 'sqrtS':
        return <Text style={styles.cellText}>{formatValue(r.sqrtS)} TeV</Text>;
      case 'lumi':
        return <Text style={styles.cellText}>{formatValue(r.luminosity)} fb⁻¹</Text>;
      case 'method':
        return <Text style={styles.cellText} numberOfLines={2}>{METHOD_LABELS[r.method]}</Text>;
      case 'state':
        return (
          <View style={styles.badges}>
            <StateBadge state={r.state} />
            {r.isPublic ? <PublicBadge isPublic /> : null}
          </View>
        );
      case 'version':
        return <Text style={styles.cellText}>v{r.version}</Text>;
      case 'updated':
        return <Text style={styles.cellText}>{formatDate(r.updatedAt)}</Text>;
    }
  };
  return (
    <View style={styles.table} role="table" aria-label="Results">
      <View style={[styles.row, styles.headRow]} role="row">
        {cols.map((c) => (
          <Text key={c.key} role="columnheader" style={[styles.head, { flex: c.flex }]}>
            {c.label}
          </Text>
        ))}
      </View>
      {items.map((r) => (
        <Link key={r.id} href={hrefFor(r)} asChild>
          <Pressable role="link" aria-label={linkName(r)} style={rowStyle}>
            {cols.map((c) => (
              <View key={c.key} style={[styles.cell, { flex: c.flex }]}>
                {cell(c.key, r)}
              </View>
            ))}
          </Pressable>
        </Link>
      ))}
    </View>
  );
}

function ResultCards({ items, hrefFor, showGroup = true }: Props) {
  return (
    <View style={styles.cards}>
      {items.map((r) => (
        <Link key={r.id} href={hrefFor(r)} asChild>
          <Pressable role="link" aria-label={linkName(r)} style={styles.cardLink}>
            <Card style={styles.card}>
              <View style={styles.cardHead}>
                <Text style={[styles.title, styles.cardTitle]}>{r.title}</Text>
                <View style={styles.badges}>
                  <StateBadge state={r.state} />
                  {r.isPublic ? <PublicBadge isPublic /> : null}
                </View>
              </View>
              {r.model ? <Text variant="muted">{r.model}</Text> : null}
              <ParametersBadge result={r} />
              <Text variant="caption">
                {parameterLabel(r)} · √s = {formatValue(r.sqrtS)} TeV · L = {formatValue(r.luminosity)} fb⁻¹ · {METHOD_LABELS[r.method]}
              </Text>
              <Text variant="caption">
                {showGroup ? `${r.groupName} · ` : ''}v{r.version} · updated {formatDate(r.updatedAt)}
              </Text>
            </Card>
          </Pressable>
        </Link>
      ))}
    </View>
  );
}

const styles = StyleSheet.create({
  table: { backgroundColor: colors.surface, borderWidth: 1, borderColor: colors.border, borderRadius: radii.lg, overflow: 'hidden' },
  row: { flexDirection: 'row', alignItems: 'center', paddingHorizontal: space.md, gap: space.sm },
  headRow: { backgroundColor: colors.surfaceAlt, minHeight: 36 },
  head: { fontFamily: fonts.semibold, fontSize: 13, color: colors.textMuted },
  cell: { minWidth: 0 },
  cellText: { fontSize: 13, lineHeight: 18 },
  titleCell: { gap: 2 },
  title: { fontFamily: fonts.semibold, fontSize: 14, lineHeight: 20, color: colors.text },
  badges: { flexDirection: 'row', flexWrap: 'wrap', gap: space.xs },
  cards: { gap: space.md },
  cardLink: { borderRadius: radii.lg },
  card: { gap: space.xs },
  cardTitle: { flex: 1 },
  cardHead: { flexDirection: 'row', alignItems: 'flex-start', justifyContent: 'space-between', gap: space.sm },
});
