import { useLocalSearchParams } from 'expo-router';
import { useEffect, useState } from 'react';
import { Linking, Platform, StyleSheet, View } from 'react-native';
import { useCurrentGroup } from '@/hooks/use-current-group';
import { useIsWide } from '@/hooks/use-layout';
import { useCheckout, useInvoices, usePlan, usePortal } from '@/hooks/use-plan';
import { space } from '@/themes/tokens';
import type { BillingInterval } from '@/shared/plans';
import { InvoiceList } from '../billing/invoice-list';
import { PlanOptions } from '../billing/plan-options';
import { statusLine } from '../billing/plan-text';
import { UsageBar } from '../billing/usage-bar';
import { Banner } from '../ui/banner';
import { Button } from '../ui/button';
import { Card } from '../ui/card';
import { EmptyState } from '../ui/empty-state';
import { errorMessage } from '../ui/form';
import { Loading } from '../ui/loading';
import { Screen } from '../ui/screen';
import { Text } from '../ui/text';

/** How long a return from the payment page waits for the provider's confirmation. */
const CONFIRM_WAIT_MS = 30_000;

/** The payment pages live at the provider: the web app leaves for them and comes back. */
function openExternal(url: string) {
  if (Platform.OS === 'web' && typeof window !== 'undefined') window.location.assign(url);
  else void Linking.openURL(url);
}

/**
 * The group's storage plan: usage by kind against the quota, the plan in force and why it may
 * have lapsed, and for owners the upgrade (the provider's checkout page), the billing portal and
 * the invoices. Other members see the plan and the usage only.
 */
export function PlanScreen() {
  const params = useLocalSearchParams<{ group?: string; checkout?: string }>();
  const { group, groups, select, can } = useCurrentGroup();
  const wide = useIsWide();

  // A return from the payment page names the group that was paid for.
  useEffect(() => {
    if (params.group && params.group !== group?.id && groups.some((g) => g.id === params.group)) select(params.group);
  }, [params.group, group?.id, groups, select]);

  const groupId = group?.id;
  const owner = can('billing.manage');
  const returning = params.checkout === 'success';
  const [confirming, setConfirming] = useState(returning);
  const plan = usePlan(groupId, { poll: confirming });
  const invoices = useInvoices(groupId, owner, { poll: confirming });
  const checkout = useCheckout(groupId);
  const portal = usePortal(groupId);
  const [pending, setPending] = useState<BillingInterval | null>(null);
  const view = plan.data;

  useEffect(() => {
    if (!confirming) return;
    if (view?.status === 'active') return setConfirming(false);
    const timer = setTimeout(() => setConfirming(false), CONFIRM_WAIT_MS);
    return () => clearTimeout(timer);
  }, [confirming, view?.status]);

  const upgrade = (interval: BillingInterval) => {
    setPending(interval);
    checkout.mutate(interval, { onSuccess: ({ url }) => openExternal(url), onError: () => setPending(null) });
  };

  if (!group) {
    return (
      <Screen title="Plan and storage">
        <EmptyState title="No group yet" message="Create or join a group first: each group has its own storage plan." />
      </Screen>
    );
  }

  const lapsed = view?.status === 'past_due' || view?.status === 'unpaid';
  const canUpgrade = owner && view !== undefined && view.plan.id === 'free' && !lapsed;

  const checkoutBanner =
    params.checkout === 'cancelled' ? (
      <Banner tone="info" message="Checkout cancelled; nothing was charged." />
    ) : returning && view?.status === 'active' ? (
      <Banner tone="success" message="Payment received: the Institutional plan is active. The receipt was mailed to the group's owners." />
    ) : returning && confirming ? (
      <Banner tone="info" message="Waiting for the payment provider to confirm the payment…" />
    ) : returning && view ? (
      <Banner tone="warning" message="The payment is not confirmed yet. Reload this page in a minute; if nothing changes, open Manage billing." />
    ) : null;

  const usageCard = view ? (
    <Card>
      <Text variant="title">Storage</Text>
      <UsageBar view={view} />
      <Text variant="caption">Counted: uploaded result files with their stored data, scan inputs kept for re-runs, and cached figure renders. Deleting frees the space at once.</Text>
    </Card>
  ) : null;

  const statusCard = view ? (
    <Card>
      <Text variant="title">{view.plan.name} plan</Text>
      <Text>{statusLine(view)}</Text>
      {view.notice ? <Banner tone={view.readOnly ? 'error' : 'warning'} message={view.notice} /> : null}
      {owner && view.hasBillingAccount ? (
        <Button
          label="Manage billing"
          accessibilityLabel="Manage billing (change interval, card or cancel, at the payment provider)"
          variant={lapsed ? 'primary' : 'secondary'}
          loading={portal.isPending || portal.isSuccess}
          onPress={() => portal.mutate(undefined, { onSuccess: ({ url }) => openExternal(url) })}
          style={styles.alignStart}
        />
      ) : null}
      {portal.error ? <Banner tone="error" message={errorMessage(portal.error)!} /> : null}
      {!owner ? <Text variant="muted">Only the group's owners can change its plan and see its invoices.</Text> : null}
    </Card>
  ) : null;

  const plansCard = view ? (
    <Card>
      <Text variant="title">Plans</Text>
      <PlanOptions plans={view.plans} currentId={view.plan.id} onUpgrade={canUpgrade ? upgrade : null} pending={pending} />
      {canUpgrade ? <Text variant="caption">Upgrading opens the payment page; you come back here when it is done.</Text> : null}
      {checkout.error ? <Banner tone="error" message={errorMessage(checkout.error)!} /> : null}
    </Card>
  ) : null;

  const invoicesCard = owner && view ? (
    <Card>
      <Text variant="title">Invoices</Text>
      {invoices.isPending ? <Loading label="Loading invoices…" /> : null}
      {invoices.error ? <Banner tone="error" message={errorMessage(invoices.error)!} /> : null}
      {invoices.data ? <InvoiceList invoices={invoices.data} groupId={groupId ?? ""} /> : null}
    </Card>
  ) : null;

  return (
    <Screen title="Plan and storage" subtitle={group.name}>
      {checkoutBanner}
      {plan.isPending ? <Loading label="Loading the plan…" /> : null}
      {plan.error ? <Banner tone="error" message={errorMessage(plan.error)!} /> : null}
      {wide ? (
        <>
          <View style={styles.columns}>
            <View style={styles.main}>
              {usageCard}
              {statusCard}
            </View>
            {invoicesCard ? <View style={styles.side}>{invoicesCard}</View> : null}
          </View>
          {plansCard}
        </>
      ) : (
        <>
          {statusCard}
          {usageCard}
          {plansCard}
          {invoicesCard}
        </>
      )}
    </Screen>
  );
}

const styles = StyleSheet.create({
  columns: { flexDirection: 'row', gap: space.lg, alignItems: 'flex-start' },
  main: { flex: 3, minWidth: 0, gap: space.lg },
  side: { flex: 2, minWidth: 0 },
  alignStart: { alignSelf: 'flex-start' },
});
