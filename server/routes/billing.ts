import express, { Router, type RequestHandler } from 'express';
import { checkoutSchema, invoiceParams } from '../../shared/plans';
import { groupParams } from '../../shared/schemas/groups';
import { requireGroup } from '../access';
import type { Ctx } from '../context';
import { handle } from '../lib/validate';
import * as billing from '../services/billing';
import * as invoices from '../services/invoices';

/** Plan, usage and invoices of a group; checkout and the billing portal for its owners. */
export function billingRouter(ctx: Ctx) {
  const r = Router();

  // Every member sees the plan and the usage; billing itself is the owners'.
  r.get('/groups/:groupId/plan', requireGroup(ctx, 'group.read'), handle({ params: groupParams }, async ({ params }, _req, res) => {
    res.json(await billing.getPlanView(ctx, params.groupId));
  }));

  r.get('/groups/:groupId/invoices', requireGroup(ctx, 'billing.manage'), handle({ params: groupParams }, async ({ params }, _req, res) => {
    res.json({ invoices: await billing.listInvoices(ctx, params.groupId) });
  }));

  r.get('/groups/:groupId/invoices/:invoiceId.pdf', requireGroup(ctx, 'billing.manage'), handle({ params: invoiceParams }, async ({ params }, _req, res) => {
    const file = await invoices.invoicePdf(ctx, params.groupId, params.invoiceId);
    res.setHeader('Content-Type', 'application/pdf');
    res.attachment(file.fileName);
    res.setHeader('Cache-Control', 'private, no-cache');
    res.send(file.body);
  }));

  r.post(
    '/groups/:groupId/billing/checkout',
    requireGroup(ctx, 'billing.manage'),
    handle({ params: groupParams, body: checkoutSchema }, async ({ params, body }, req, res) => {
      res.json(await billing.startCheckout(ctx, params.groupId, { email: req.user!.email }, body.interval));
    }),
  );

  r.post('/groups/:groupId/billing/portal', requireGroup(ctx, 'billing.manage'), handle({ params: groupParams }, async ({ params }, _req, res) => {
    res.json(await billing.openPortal(ctx, params.groupId));
  }));

  return r;
}

/**
 * The provider's webhook: the signature covers the exact bytes sent, so this route reads the raw
 * body (mounted before the JSON parser) and nothing else touches it before the check.
 */
export function billingWebhook(ctx: Ctx): RequestHandler[] {
  return [
    express.raw({ type: 'application/json', limit: '1mb' }),
    async (req, res) => {
      res.json(await billing.handleWebhook(ctx, req.body, req.get('Stripe-Signature')));
    },
  ];
}
