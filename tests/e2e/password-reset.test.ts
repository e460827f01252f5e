import { newPage, pageErrors, shot, signUpInBrowser, startE2E, VIEWPORTS, type E2E, type ViewportName } from '../helpers/browser';

jest.setTimeout(180_000);

let e: E2E;
beforeAll(async () => {
  e = await startE2E();
});
afterAll(async () => e?.close());

const OLD_PASSWORD = 'the-forgotten-passphrase';
const NEW_PASSWORD = 'a-freshly-chosen-passphrase';

describe.each(Object.keys(VIEWPORTS) as ViewportName[])('at %s size', (vp) => {
  const email = `forgetful-${vp}-${Date.now().toString(36)}@lab.example`;

  test('forgot password → mail in the dev inbox → link → new password; the new one signs in, the old one is refused, and the other device is signed out', async () => {
    // A device that stays signed in (it reads the development inbox, and is signed out by the reset).
    const phone = await newPage(e, vp);
    const p = phone.page;
    await signUpInBrowser(p, 'Forgetful Physicist', email, OLD_PASSWORD);

    // Another device, signed out: "Forgot password?" from the sign-in screen.
    const laptop = await newPage(e, vp);
    const l = laptop.page;
    await l.goto('/sign-in');
    await l.getByLabel('E-mail').fill(email);
    await shot(l, vp, 'sign-in-forgot-link');
    await l.getByRole('link', { name: 'Forgot password?', exact: true }).click();
    await l.getByRole('heading', { name: 'Forgot your password?', exact: true }).waitFor();
    // The address typed on the sign-in screen comes along.
    await expect(l.getByLabel('E-mail').inputValue()).resolves.toBe(email);

    // Bad input is refused beside the field; an unknown address gets the same neutral answer.
    await l.getByLabel('E-mail').fill('not-an-address');
    await l.getByRole('button', { name: 'Send reset link', exact: true }).click();
    await l.getByText('Must be a valid e-mail address').waitFor();
    const unknown = `nobody-${vp}-${Date.now().toString(36)}@lab.example`;
    await l.getByLabel('E-mail').fill(unknown);
    await l.getByRole('button', { name: 'Send reset link', exact: true }).click();
    await l.getByText(`If an account exists for ${unknown}, a mail with a reset link was sent to it. Check your inbox.`).waitFor();
    await l.getByLabel('E-mail').fill(email);
    await l.getByRole('button', { name: 'Send the link again', exact: true }).click();
    await l.getByText(`If an account exists for ${email}, a mail with a reset link was sent to it. Check your inbox.`).waitFor();
    await shot(l, vp, 'forgot-password-sent');

    // The mail, in the development inbox of the signed-in device.
    await p.goto('/inbox');
    const mail = p.getByRole('button', { name: 'Mail: Reset your Bandwright password' });
    await mail.waitFor();
    await mail.click();
    const link = p.getByRole('link', { name: /\/reset-password\?token=/ });
    const url = (await link.textContent())!;
    expect(url.startsWith(`${e.base}/reset-password?token=`)).toBe(true);
    await shot(p, vp, 'inbox-reset-mail');

    // The reset screen: the shared password rule and the repeat are checked beside the fields.
    await l.goto(url);
    await l.getByRole('heading', { name: 'Choose a new password', exact: true }).waitFor();
    await shot(l, vp, 'reset-password');
    await l.getByLabel('New password', { exact: true }).fill('short');
    await l.getByLabel('Repeat the new password').fill('different');
    await l.getByRole('button', { name: 'Set new password', exact: true }).click();
    await l.getByText('Must be at least 10 characters').waitFor();
    await l.getByText('Does not match the new password').waitFor();
    await expect(l.getByLabel('New password', { exact: true }).getAttribute('aria-invalid')).resolves.toBe('true');
    await shot(l, vp, 'reset-password-errors');
    await l.getByLabel('New password', { exact: true }).fill(NEW_PASSWORD);
    await l.getByLabel('Repeat the new password').fill(NEW_PASSWORD);
    await l.getByRole('button', { name: 'Set new password', exact: true }).click();

    // Back on the sign-in screen: the old password is refused, the new one works.
    await l.getByText('Your password was changed and every device was signed out. Sign in with the new password.').waitFor();
    await shot(l, vp, 'sign-in-after-reset');
    await l.getByLabel('E-mail').fill(email);
    await l.getByLabel('Password').fill(OLD_PASSWORD);
    await l.getByRole('button', { name: 'Sign in', exact: true }).click();
    await l.getByRole('alert').filter({ hasText: /invalid email or password/i }).waitFor();
    await l.getByLabel('Password').fill(NEW_PASSWORD);
    await l.getByRole('button', { name: 'Sign in', exact: true }).click();
    await l.getByRole('region', { name: 'You are not in a group yet' }).waitFor();

    // The device that stayed signed in was signed out by the reset.
    await p.goto('/account');
    await p.getByRole('button', { name: 'Sign in', exact: true }).waitFor();

    // The link worked once.
    await l.goto(url);
    await l.getByLabel('New password', { exact: true }).fill('yet-another-passphrase');
    await l.getByLabel('Repeat the new password').fill('yet-another-passphrase');
    await l.getByRole('button', { name: 'Set new password', exact: true }).click();
    await l.getByText(/This reset link cannot be used: it was already used/).waitFor();
    await l.getByRole('link', { name: 'Ask for a new link', exact: true }).waitFor();
    await shot(l, vp, 'reset-password-used-link');

    expect(pageErrors(p)).toEqual([]);
    expect(pageErrors(l)).toEqual([]);
    await phone.context.close();
    await laptop.context.close();
  });
});
