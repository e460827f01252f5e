import { StyleSheet, View } from 'react-native';
import { colors, space } from '@/themes/tokens';
import { formatMoney, type Invoice } from '@/shared/plans';
import { formatDate } from '../results/format';
import { api } from '@/hooks/api';
import { Anchor } from '../ui/anchor';
import { Text } from '../ui/text';
import { INVOICE_STATUS } from './plan-text';

/** The group's invoices, newest first: date, amount, state and the period paid for. */
export function InvoiceList({ invoices, groupId }: { invoices: Invoice[]; groupId: string }) {
  if (invoices.length === 0) return <Text variant="muted">No invoices yet. They appear here once a payment is made.</Text>;
  return (
    <View role="list" aria-label="Invoices" style={styles.list}>
      {invoices.map((i) => {
        const amount = formatMoney(i.amountCents, i.currency);
        const status = INVOICE_STATUS[i.status] ?? i.status;
        const date = formatDate(i.paidAt ?? i.createdAt);
        const period = `${formatDate(i.periodStart)} – ${formatDate(i.periodEnd)}`;
        return (
          <View key={i.id} role="listitem" aria-label={`Invoice of ${date}: ${amount}, ${status}, for ${period}`} style={styles.row}>
            <View style={styles.main}>
              <Text variant="label">{date}</Text>
              <Text variant="caption">For {period}</Text>
              <Anchor href={api.billing.invoicePdfUrl(groupId, i.id)} download label={`Download the invoice of ${date} (PDF)`}>
                Download (PDF)
              </Anchor>
            </View>
            <View style={styles.end}>
              <Text style={styles.amount}>{amount}</Text>
              <Text variant="caption" style={i.status === 'paid' ? styles.paid : i.status === 'open' ? styles.failed : null}>
                {status}
              </Text>
            </View>
          </View>
        );
      })}
    </View>
  );
}

const styles = StyleSheet.create({
  list: { gap: 0 },
  row: { flexDirection: 'row', alignItems: 'center', flexWrap: 'wrap', gap: space.md, paddingVertical: space.sm, borderTopWidth: 1, borderTopColor: colors.border },
  main: { flexGrow: 1, flexShrink: 1, flexBasis: 140, gap: 2 },
  end: { alignItems: 'flex-end', gap: 2, marginLeft: 'auto' },
  amount: { fontVariant: ['tabular-nums'] },
  paid: { color: colors.success },
  failed: { color: colors.danger },
});
