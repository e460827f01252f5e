import { StyleSheet, View } from 'react-native';
import type { ResultState } from '@/shared/schemas/results';
import { colors, fonts, radii, space } from '@/themes/tokens';
import { Text } from '../ui/text';
import { parametersBadge, STATE_LABELS } from './format';

const tones: Record<ResultState, { bg: string; fg: string }> = {
  draft: { bg: colors.surfaceAlt, fg: colors.textMuted },
  published: { bg: colors.successSoft, fg: colors.success },
  superseded: { bg: colors.warningSoft, fg: colors.warning },
  retracted: { bg: colors.dangerSoft, fg: colors.danger },
};

export function StateBadge({ state }: { state: ResultState }) {
  const t = tones[state];
  return (
    <View style={[styles.badge, { backgroundColor: t.bg }]} aria-label={`State: ${STATE_LABELS[state]}`}>
      <Text style={[styles.text, { color: t.fg }]}>{STATE_LABELS[state]}</Text>
    </View>
  );
}

export function PublicBadge({ isPublic }: { isPublic: boolean }) {
  return (
    <View style={[styles.badge, { backgroundColor: isPublic ? colors.primarySoft : colors.surfaceAlt }]}>
      <Text style={[styles.text, { color: isPublic ? colors.primary : colors.textMuted }]}>{isPublic ? 'Public' : 'Group only'}</Text>
    </View>
  );
}

/** Marks a result over two parameters (a plane); nothing for a curve. Plain text, no colour meaning. */
export function ParametersBadge({ result }: { result: Parameters<typeof parametersBadge>[0] }) {
  const b = parametersBadge(result);
  if (!b) return null;
  return (
    <View style={[styles.badge, styles.plain]} role="img" aria-label={b.label}>
      <Text style={[styles.text, { color: colors.text }]} numberOfLines={1}>
        {b.text}
      </Text>
    </View>
  );
}

const styles = StyleSheet.create({
  badge: { alignSelf: 'flex-start', borderRadius: radii.pill, paddingHorizontal: space.sm, paddingVertical: 2 },
  plain: { backgroundColor: colors.surface, borderWidth: 1, borderColor: colors.border, maxWidth: '100%' },
  text: { fontFamily: fonts.semibold, fontSize: 12, lineHeight: 16 },
});
