import { linkMail, type OutgoingMail } from '../clients/mail';

/**
 * The account's own mail (address verification, password reset). better-auth
 * makes the tokens and calls these builders (server/auth.ts); the mail goes through the same
 * outbox as every other message.
 */

/** How long a mailed verification link works. */
export const VERIFICATION_HOURS = 24;
/** How long a password reset link works; it works once. */
export const RESET_MINUTES = 60;

/**
 * The link leads to the app's verification screen (app/verify-email.tsx), which confirms the token
 * with better-auth and then offers the way on to `next` (an app path, e.g. the invitation).
 */
export function verificationMail(to: { email: string; name: string }, publicUrl: string, token: string, next: string): OutgoingMail {
  const query = new URLSearchParams({ token, ...(next !== '/' ? { next } : {}) });
  return linkMail({
    to: to.email,
    kind: 'verification',
    subject: 'Verify your address on Bandwright',
    lines: [
      `Hello ${to.name},`,
      `Please confirm that ${to.email} is your address. Invitations to groups can only be accepted from a verified address.`,
      `The link works for ${VERIFICATION_HOURS} hours. If you did not create a Bandwright account, ignore this mail.`,
    ],
    linkLabel: 'Verify my address',
    url: `${publicUrl}/verify-email?${query.toString()}`,
  });
}

/** The link leads to the app's reset screen (app/reset-password.tsx) with the token. */
export function passwordResetMail(to: { email: string; name: string }, publicUrl: string, token: string): OutgoingMail {
  return linkMail({
    to: to.email,
    kind: 'password-reset',
    subject: 'Reset your Bandwright password',
    lines: [
      `Hello ${to.name},`,
      `Someone asked to reset the password of the Bandwright account ${to.email}. Choose a new one with the link below.`,
      `The link works once, within ${RESET_MINUTES} minutes; after the reset every device is signed out. If you did not ask for this, ignore this mail: your password stays as it is.`,
    ],
    linkLabel: 'Choose a new password',
    url: `${publicUrl}/reset-password?token=${encodeURIComponent(token)}`,
  });
}

