import { eq } from 'drizzle-orm';
import { addMember } from '@/db/queries/groups';
import { billingAccounts, groups, user } from '@/db/schema';
import { MB } from '@/shared/bytes';
import { sampleCurve, sampleMeta } from '../helpers/factories';
import { fullShot, newPage, pageErrors, shot, signUpInBrowser as signUp, startE2E, VIEWPORTS, type E2E, type ViewportName } from '../helpers/browser';

jest.setTimeout(240_000);

let e: E2E;
beforeAll(async () => {
  e = await startE2E({ stripe: true });
});
afterAll(async () => e?.close());

describe.each(Object.keys(VIEWPORTS) as ViewportName[])('at %s size', (vp) => {
  const tag = `${vp}-${Date.now().toString(36)}`;
  const groupName = `Fictional Resonance Team ${vp}`;

  test('an owner upgrades through the fake checkout, sees the new quota and finds the receipt in the development inbox; a viewer sees plan and usage only', async () => {
    const { page: o, context } = await newPage(e, vp);
    await signUp(o, 'Olga Owner', `owner-${tag}@lab.example`);
    await o.getByRole('button', { name: 'Create a group', exact: true }).click();
    await o.getByLabel('Group name').fill(groupName);
    await o.getByRole('button', { name: 'Create group', exact: true }).click();
    await o.getByRole('heading', { name: 'Members', exact: true }).waitFor();

    // From Account to the plan screen: a new group is on Free.
    await o.goto('/account');
    await o.getByRole('link', { name: 'Plan and storage' }).click();
    await o.getByRole('heading', { name: 'Plan and storage', exact: true }).waitFor();
    await o.getByText('No paid subscription: the Free plan applies.').waitFor();
    await expect(o.getByRole('progressbar', { name: 'Storage used' }).getAttribute('aria-valuetext')).resolves.toBe('0 bytes of 50 MB used (0%)');

    // Some data, so that the bar has something to show (uploaded through the API as a script would).
    const [g] = await e.ctx.db.select({ id: groups.id }).from(groups).where(eq(groups.name, groupName));
    const groupId = g!.id;
    const { curve, theory } = sampleCurve(40);
    const uploaded = await o.request.post(`/api/groups/${groupId}/results`, { data: { meta: sampleMeta(), curve, theory }, headers: { Origin: e.base } });
    expect(uploaded.status()).toBe(201);
    await o.reload();
    await expect(o.getByRole('progressbar', { name: 'Storage used' }).getAttribute('aria-valuetext')).resolves.toMatch(/^\d+(\.\d)? KB of 50 MB used \(<1%\)$/);
    await o.getByText('No invoices yet.', { exact: false }).waitFor();
    await fullShot(o, vp, 'plan-free');

    // Upgrade, billed yearly: the browser goes to the fake's hosted checkout page.
    await o.getByRole('button', { name: 'Upgrade to Institutional, billed yearly (€490.00 per year)' }).click();
    await o.waitForURL(`${e.stripeFake!.url}/checkout/**`);
    await o.getByRole('heading', { name: 'Bandwright Institutional plan' }).waitFor();
    await o.getByRole('textbox', { name: 'Card number' }).fill('4000 0000 0000 0002');
    await o.getByRole('button', { name: 'Pay €490.00' }).click();
    await o.getByRole('alert').filter({ hasText: 'Your card was declined.' }).waitFor();
    await shot(o, vp, 'fake-checkout-declined');
    await o.getByRole('textbox', { name: 'Card number' }).fill('4242 4242 4242 4242');
    await o.getByRole('button', { name: 'Pay €490.00' }).click();

    // Back in the app: the plan is active, the quota is 20 GB, the invoice is listed.
    await o.waitForURL(/\/plan\?group=.*checkout=success/);
    await o.getByText('Payment received: the Institutional plan is active.', { exact: false }).waitFor();
    await o.getByText(/^Billed yearly \(€490\.00 per year\); renews on /).waitFor();
    await expect(o.getByRole('progressbar', { name: 'Storage used' }).getAttribute('aria-valuetext')).resolves.toMatch(/ of 20 GB used/);
    await o.getByRole('listitem', { name: /Invoice of .*: €490\.00, Paid/ }).waitFor();
    await expect(o.getByRole('button', { name: /^Upgrade to Institutional/ }).count()).resolves.toBe(0);
    await o.getByRole('button', { name: /^Manage billing/ }).waitFor();
    await fullShot(o, vp, 'plan-institutional');

    // The receipt is in the owner's development inbox.
    await o.goto('/inbox');
    const receipt = o.getByRole('button', { name: `Mail: Receipt: €490.00 for ${groupName}’s Institutional plan` });
    await receipt.waitFor();
    await receipt.click();
    await o.getByText(`${groupName} paid €490.00 for the Bandwright Institutional plan`, { exact: false }).waitFor();
    await shot(o, vp, 'inbox-receipt');

    // A viewer of the group sees the plan and the usage, and nothing to manage.
    const viewer = await newPage(e, vp);
    const v = viewer.page;
    const viewerEmail = `viewer-${tag}@lab.example`;
    await signUp(v, 'Vera Viewer', viewerEmail);
    const [u] = await e.ctx.db.select({ id: user.id }).from(user).where(eq(user.email, viewerEmail));
    await addMember(e.ctx.db, groupId, u!.id, 'viewer');
    await v.goto('/plan');
    await v.getByText(/^Billed yearly/).waitFor();
    await v.getByText("Only the group's owners can change its plan and see its invoices.").waitFor();
    await expect(v.getByRole('button', { name: /^(Upgrade|Manage billing)/ }).count()).resolves.toBe(0);
    await expect(v.getByRole('list', { name: 'Invoices' }).count()).resolves.toBe(0);
    await fullShot(v, vp, 'plan-viewer');

    // The next renewal fails (the card on file now fails later charges) while the group holds more
    // than the Free plan allows: the owner sees why the group is read-only and how to fix it.
    const [account] = await e.ctx.db.select().from(billingAccounts).where(eq(billingAccounts.groupId, groupId));
    const customer = e.stripeFake!.engine.customer(account!.customerId!);
    customer.card = '4000000000000341';
    await e.stripeFake!.renew(account!.subscriptionId!);
    await e.ctx.db.update(groups).set({ storageBytes: 60 * MB }).where(eq(groups.id, groupId));
    await o.goto('/plan');
    await o.getByRole('alert').filter({ hasText: /^The payment for this group's Institutional plan failed on .* so it is read-only: nothing was deleted/ }).waitFor();
    await o.getByText('The last payment failed: the Free plan applies until it is paid.').waitFor();
    await o.getByRole('listitem', { name: /: €490\.00, Payment failed/ }).waitFor();
    await fullShot(o, vp, 'plan-read-only');

    expect(pageErrors(o)).toEqual([]);
    expect(pageErrors(v)).toEqual([]);
    await viewer.context.close();
    await context.close();
  });
});
