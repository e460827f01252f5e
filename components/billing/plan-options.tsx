import { StyleSheet, View } from 'react-native';
import { useIsWide } from '@/hooks/use-layout';
import { colors, radii, space } from '@/themes/tokens';
import { BILLING_INTERVALS, formatPrice, type BillingInterval, type Plan } from '@/shared/plans';
import { formatBytes } from '@/shared/bytes';
import { Button } from '../ui/button';
import { Text } from '../ui/text';

type Props = {
  plans: Plan[];
  currentId: Plan['id'];
  /** Upgrade buttons (owners, and only while Institutional is not in force); null hides them. */
  onUpgrade: ((interval: BillingInterval) => void) | null;
  pending: BillingInterval | null;
};

/** The plans side by side (stacked on phones) with what each allows and costs. */
export function PlanOptions({ plans, currentId, onUpgrade, pending }: Props) {
  const wide = useIsWide();
  return (
    <View style={[styles.options, wide && styles.optionsWide]}>
      {plans.map((p) => {
        const current = p.id === currentId;
        return (
          <View key={p.id} style={[styles.option, wide && styles.optionWide, current && styles.current]} role="region" aria-label={`${p.name} plan${current ? ' (current)' : ''}`}>
            <Text variant="title">
              {p.name}
              {current ? <Text style={styles.badge}> · current</Text> : null}
            </Text>
            <Text variant="muted">{p.summary}</Text>
            <Text>Storage: {formatBytes(p.quotaBytes)}</Text>
            <Text>
              Figure renders kept: up to {p.renderCache.maxRenders.toLocaleString('en')} ({formatBytes(p.renderCache.maxBytes)}), each for {p.renderCache.maxAgeDays} days after last use; not counted toward storage
            </Text>
            <Text>Scans queued at once: up to {p.scanQueueLimit.toLocaleString('en')} pseudo-experiments (grid points × pseudo-experiments; an asymptotic point counts one)</Text>
            <Text variant="label">{p.prices ? BILLING_INTERVALS.map((i) => formatPrice(p, i)).join(' or ') : 'No charge'}</Text>
            {onUpgrade && p.prices && !current ? (
              <View style={styles.buttons}>
                {BILLING_INTERVALS.map((i) => (
                  <Button
                    key={i}
                    label={`Upgrade, ${i === 'month' ? 'monthly' : 'yearly'}`}
                    accessibilityLabel={`Upgrade to ${p.name}, billed ${i === 'month' ? 'monthly' : 'yearly'} (${formatPrice(p, i)})`}
                    variant={i === 'year' ? 'primary' : 'secondary'}
                    loading={pending === i}
                    disabled={pending !== null && pending !== i}
                    onPress={() => onUpgrade(i)}
                  />
                ))}
              </View>
            ) : null}
          </View>
        );
      })}
    </View>
  );
}

const styles = StyleSheet.create({
  options: { gap: space.md },
  optionsWide: { flexDirection: 'row', alignItems: 'stretch' },
  // flex: 1 only in a row: in a column it would shrink the card to nothing under its content.
  optionWide: { flex: 1 },
  option: { gap: space.sm, padding: space.lg, borderRadius: radii.lg, borderWidth: 1, borderColor: colors.border, backgroundColor: colors.surface },
  current: { borderColor: colors.primary, borderWidth: 2 },
  badge: { color: colors.primary },
  buttons: { flexDirection: 'row', flexWrap: 'wrap', gap: space.sm, marginTop: space.xs },
});
