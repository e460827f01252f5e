import { StyleSheet, View } from 'react-native';
import { colors, radii, space } from '@/themes/tokens';
import { type PlanView } from '@/shared/plans';
import { formatBytes } from '@/shared/bytes';
import { Text } from '../ui/text';
import { renderCacheLine, usageKinds, usageSummary } from './plan-text';

/**
 * Storage used against the quota: one bar stacked by kind (uploads, scan inputs), the numbers
 * beside it, and the render cache on a line of its own (it does not count). Over the quota the
 * bar is full and outlined in the danger colour.
 */
export function UsageBar({ view }: { view: Pick<PlanView, 'usage' | 'quotaBytes' | 'plan'> }) {
  const kinds = usageKinds(view);
  const total = view.usage.totalBytes;
  const over = total > view.quotaBytes;
  const scale = Math.max(total, view.quotaBytes) || 1;
  const pct = Math.min(100, view.quotaBytes > 0 ? Math.round((total / view.quotaBytes) * 100) : 0);
  return (
    <View style={styles.box}>
      <Text variant="label">{usageSummary(view)}</Text>
      <View
        role="progressbar"
        aria-label="Storage used"
        aria-valuemin={0}
        aria-valuemax={100}
        aria-valuenow={pct}
        aria-valuetext={usageSummary(view)}
        style={[styles.track, over && styles.trackOver]}
      >
        {kinds.map((k) =>
          k.bytes > 0 ? <View key={k.key} style={[styles.segment, { backgroundColor: k.color, width: `${Math.max(0.5, (k.bytes / scale) * 100)}%` }]} /> : null,
        )}
      </View>
      <View style={styles.legend}>
        {kinds.map((k) => (
          <View key={k.key} style={styles.legendRow} aria-label={`${k.label}: ${formatBytes(k.bytes)}${k.detail ? `, ${k.detail}` : ''}`}>
            <View style={[styles.swatch, { backgroundColor: k.color }]} />
            <Text style={styles.legendLabel}>{k.label}</Text>
            <Text style={styles.legendValue}>
              {formatBytes(k.bytes)}
              {k.detail ? ` · ${k.detail}` : ''}
            </Text>
          </View>
        ))}
      </View>
      <Text variant="muted">{renderCacheLine(view)}</Text>
      {over ? <Text style={styles.overText}>Over the quota by {formatBytes(total - view.quotaBytes)}.</Text> : null}
    </View>
  );
}

const styles = StyleSheet.create({
  box: { gap: space.sm },
  track: { flexDirection: 'row', height: 16, borderRadius: radii.pill, backgroundColor: colors.surfaceAlt, overflow: 'hidden', borderWidth: 1, borderColor: colors.border },
  trackOver: { borderColor: colors.danger, borderWidth: 2 },
  segment: { height: '100%' },
  legend: { gap: space.xs },
  legendRow: { flexDirection: 'row', alignItems: 'center', gap: space.sm, flexWrap: 'wrap' },
  swatch: { width: 12, height: 12, borderRadius: radii.sm },
  legendLabel: { flexGrow: 1, flexShrink: 1 },
  legendValue: { color: colors.textMuted, fontVariant: ['tabular-nums'] },
  overText: { color: colors.danger },
});
