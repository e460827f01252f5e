import { useMutation, useQuery } from '@tanstack/react-query';
import type { BillingInterval } from '@/shared/plans';
import { api } from './api';

const planKey = (groupId: string) => ['groups', groupId, 'plan'] as const;
const invoicesKey = (groupId: string) => ['groups', groupId, 'invoices'] as const;

/**
 * The group's plan, usage and quota. Always refetched on opening (usage is live); `poll` while a
 * payment is being confirmed (the provider's events may arrive after the browser does).
 */
export function usePlan(groupId: string | undefined, opts: { poll?: boolean } = {}) {
  return useQuery({
    queryKey: planKey(groupId ?? ''),
    queryFn: () => api.billing.plan(groupId!),
    enabled: !!groupId,
    staleTime: 0,
    refetchInterval: opts.poll ? 1000 : false,
  });
}

/** The group's invoices (owners only: the query stays off for others). */
export function useInvoices(groupId: string | undefined, enabled: boolean, opts: { poll?: boolean } = {}) {
  return useQuery({
    queryKey: invoicesKey(groupId ?? ''),
    queryFn: async () => (await api.billing.invoices(groupId!)).invoices,
    enabled: !!groupId && enabled,
    staleTime: 0,
    refetchInterval: opts.poll ? 1000 : false,
  });
}

/** Starts a checkout; the answer is the payment page to open. */
export function useCheckout(groupId: string | undefined) {
  return useMutation({ mutationFn: (interval: BillingInterval) => api.billing.checkout(groupId!, { interval }) });
}

/** Opens the billing portal; the answer is its address. */
export function usePortal(groupId: string | undefined) {
  return useMutation({ mutationFn: () => api.billing.portal(groupId!) });
}
