import { Pressable, StyleSheet, View } from 'react-native';
import type { VersionSummary } from '@/shared/schemas/results';
import { colors, fonts, radii, space } from '@/themes/tokens';
import { Text } from '../ui/text';
import { formatDate, STATE_LABELS } from './format';
import { StateBadge } from './state-badge';

/** Every version, newest first, with what changed; pressing one shows it. */
export function VersionHistory({ versions, selected, onSelect }: { versions: VersionSummary[]; selected: number; onSelect: (v: number) => void }) {
  const sorted = [...versions].sort((a, b) => b.version - a.version);
  return (
    <View style={styles.list} role="list" aria-label="Versions">
      {sorted.map((v) => {
        const current = v.version === selected;
        return (
          <Pressable
            key={v.version}
            role="button"
            aria-label={`Version ${v.version}, ${STATE_LABELS[v.state].toLowerCase()}${current ? ', shown' : ''}`}
            aria-current={current || undefined}
            onPress={() => onSelect(v.version)}
            style={({ hovered }: { pressed: boolean; hovered?: boolean }) => [styles.item, current && styles.current, hovered && !current && styles.hover]}
          >
            <View style={styles.head}>
              <Text style={styles.version}>v{v.version}</Text>
              <StateBadge state={v.state} />
              <Text variant="caption" style={styles.date}>
                {v.publishedAt ? `published ${formatDate(v.publishedAt)}` : `created ${formatDate(v.createdAt)}`}
              </Text>
            </View>
            <Text variant={v.changeNote ? 'body' : 'muted'} style={styles.note}>
              {v.changeNote || (v.version === 1 ? 'First version' : 'No note')}
            </Text>
            {v.retractionReason ? (
              <Text variant="caption" style={styles.retracted}>
                Retracted: {v.retractionReason}
              </Text>
            ) : null}
          </Pressable>
        );
      })}
    </View>
  );
}

const styles = StyleSheet.create({
  list: { gap: space.xs },
  item: { padding: space.sm, borderRadius: radii.md, borderWidth: 1, borderColor: 'transparent', gap: 2 },
  current: { backgroundColor: colors.primarySoft, borderColor: colors.primary },
  hover: { backgroundColor: colors.surfaceAlt },
  head: { flexDirection: 'row', alignItems: 'center', gap: space.sm, flexWrap: 'wrap' },
  version: { fontFamily: fonts.bold, fontSize: 14 },
  date: { marginLeft: 'auto' },
  note: { fontSize: 14, lineHeight: 20 },
  retracted: { color: colors.danger },
});
