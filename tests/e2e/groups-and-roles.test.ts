import type { Page } from 'playwright-core';
import { newPage, pageErrors, shot, startE2E, VIEWPORTS, type E2E, type ViewportName } from '../helpers/browser';

jest.setTimeout(180_000);

let e: E2E;
beforeAll(async () => {
  e = await startE2E();
});
afterAll(async () => e?.close());

const PASSWORD = 'a-long-test-password';

async function signUpThroughUi(page: Page, name: string, email: string) {
  await page.goto('/sign-up');
  await page.getByLabel('Your name').fill(name);
  await page.getByLabel('E-mail').fill(email);
  await page.getByLabel('Password').fill(PASSWORD);
  await page.getByRole('button', { name: 'Create account', exact: true }).click();
}

describe.each(Object.keys(VIEWPORTS) as ViewportName[])('at %s size', (vp) => {
  const tag = `${vp}-${Date.now().toString(36)}`;
  const ownerEmail = `owner-${tag}@lab.example`;
  const memberEmail = `member-${tag}@lab.example`;
  const groupName = `Fictional Vector Search ${vp}`;

  test('sign up, create a group, invite, accept from the mail, change the role; a viewer sees no write controls', async () => {
    const owner = await newPage(e, vp);
    const o = owner.page;

    // Sign-up form refuses bad input beside the field before asking the server.
    await o.goto('/sign-up');
    await shot(o, vp, 'sign-up');
    await o.getByLabel('Your name').fill('Owner');
    await o.getByLabel('E-mail').fill('not-an-address');
    await o.getByLabel('Password').fill('short');
    await o.getByRole('button', { name: 'Create account', exact: true }).click();
    await expect(o.getByText('Must be a valid e-mail address').isVisible()).resolves.toBe(true);
    await expect(o.getByText('Must be at least 10 characters').isVisible()).resolves.toBe(true);

    await signUpThroughUi(o, 'Rhea Owner', ownerEmail);
    await o.getByRole('region', { name: 'You are not in a group yet' }).waitFor();
    await shot(o, vp, 'home-no-group');

    await o.getByRole('button', { name: 'Create a group', exact: true }).click();
    await o.getByLabel('Group name').fill(groupName);
    await shot(o, vp, 'create-group');
    await o.getByRole('button', { name: 'Create group', exact: true }).click();

    // Members screen of the new group: the owner can invite.
    await o.getByRole('heading', { name: 'Members', exact: true }).waitFor();
    await o.getByText('you are owner').waitFor();
    await o.getByLabel('E-mail address to invite').fill(memberEmail);
    await o.getByRole('radiogroup', { name: 'Role for the invitation' }).getByRole('radio', { name: 'Analyst' }).click();
    await o.getByRole('button', { name: 'Send invitation', exact: true }).click();
    await o.getByText(`Invitation sent to ${memberEmail}.`).waitFor();
    await o.getByText('Open invitations').waitFor();
    await shot(o, vp, 'members-owner');

    // The invitee signs up and finds the mail in the development inbox (the local mail fake).
    const member = await newPage(e, vp);
    const m = member.page;
    await signUpThroughUi(m, 'Theo Member', memberEmail);
    await m.getByRole('region', { name: 'You are not in a group yet' }).waitFor();
    await m.goto('/inbox');
    const mail = m.getByRole('button', { name: /Mail: Rhea Owner invited you to/ });
    await mail.waitFor();
    await mail.click();
    await shot(m, vp, 'inbox');
    await m.getByRole('link', { name: /\/invite\// }).click();
    await m.getByRole('heading', { name: `Join ${groupName}`, exact: true }).waitFor();

    // Not with an unverified address: the screen says so and sends a new verification mail,
    // whose link (in the development inbox) verifies the address and leads back here.
    await m.getByText(/^Verify your address first\./).waitFor();
    await expect(m.getByRole('button', { name: 'Accept invitation', exact: true }).count()).resolves.toBe(0);
    await m.getByRole('button', { name: 'Send the verification mail again', exact: true }).click();
    await m.getByText(`A new verification mail was sent to ${memberEmail}.`).waitFor();
    await shot(m, vp, 'invitation-unverified');
    await m.goto('/inbox');
    const verification = m.getByRole('button', { name: 'Mail: Verify your address on Bandwright' });
    await verification.first().waitFor();
    await expect(verification.count()).resolves.toBe(2);
    await verification.first().click();
    await m.getByRole('link', { name: /\/verify-email\?token=/ }).click();
    await m.getByText(`Your address ${memberEmail} is verified.`).waitFor();
    await shot(m, vp, 'address-verified');
    await m.getByRole('button', { name: 'Back to the invitation', exact: true }).click();

    await m.getByRole('heading', { name: `Join ${groupName}`, exact: true }).waitFor();
    await shot(m, vp, 'invitation');
    await m.getByRole('button', { name: 'Accept invitation', exact: true }).click();
    await m.getByText('you are analyst').waitFor();

    // The owner makes the new member a viewer.
    await o.reload();
    const roleOfMember = o.getByRole('radiogroup', { name: 'Role of Theo Member' });
    await roleOfMember.waitFor();
    // With the keyboard: the chosen chip is the group's one tab stop; the arrows move along the
    // chips and Enter chooses.
    await roleOfMember.getByRole('radio', { name: 'Analyst' }).focus();
    await o.keyboard.press('ArrowRight');
    await o.keyboard.press('ArrowRight');
    expect(await o.evaluate(() => document.activeElement?.getAttribute('aria-label'))).toBe('Viewer');
    await o.keyboard.press('Enter');
    // The change is saved on the server before the chip shows it.
    await roleOfMember.locator('[role="radio"][aria-label="Viewer"][aria-checked="true"]').waitFor();

    // As a viewer: the member list is read-only, no invitation form, no role controls.
    await m.reload();
    await m.getByText('you are viewer').waitFor();
    await expect(m.getByRole('button', { name: 'Send invitation', exact: true }).count()).resolves.toBe(0);
    await expect(m.getByRole('radiogroup').count()).resolves.toBe(0);
    await expect(m.getByRole('button', { name: /^Remove / }).count()).resolves.toBe(0);
    await shot(m, vp, 'members-viewer');

    await m.goto('/');
    await m.getByRole('heading', { name: 'Results', exact: true }).waitFor();
    await shot(m, vp, 'results-home');
    await m.goto('/account');
    await m.getByText(memberEmail).first().waitFor();
    await shot(m, vp, 'account');

    // Signing out returns to the sign-in screen, and signed-in pages send you there.
    await m.getByRole('button', { name: 'Sign out', exact: true }).click();
    await m.getByRole('button', { name: 'Sign in', exact: true }).waitFor();
    await m.goto('/members');
    await m.getByRole('button', { name: 'Sign in', exact: true }).waitFor();
    await shot(m, vp, 'sign-in');

    expect(pageErrors(o)).toEqual([]);
    expect(pageErrors(m)).toEqual([]);
    await owner.context.close();
    await member.context.close();
  });
});
