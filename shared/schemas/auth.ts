import { z } from 'zod';
import { email, shortText } from './common';

export const PASSWORD_MIN = 10;
export const PASSWORD_MAX = 128;

/** The one rule for a new password: at sign-up and when a forgotten one is reset. */
export const newPassword = z
  .string()
  .min(PASSWORD_MIN, `must be at least ${PASSWORD_MIN} characters`)
  .max(PASSWORD_MAX, `must be at most ${PASSWORD_MAX} characters`);

/** A path inside the app to come back to after a mailed link: never another site (no open redirect). */
const callbackURL = z
  .string()
  .max(500, 'must be at most 500 characters')
  .regex(/^\/(?![/\\])/, 'must be a path in this app, starting with a single /')
  .optional();

export const signUpSchema = z.object({
  name: shortText(80),
  email,
  password: newPassword,
  callbackURL,
});
export type SignUpInput = z.infer<typeof signUpSchema>;

export const signInSchema = z.object({
  email,
  password: z.string().min(1, 'is required').max(PASSWORD_MAX, `must be at most ${PASSWORD_MAX} characters`),
  rememberMe: z.boolean().optional(),
  callbackURL,
});
export type SignInInput = z.infer<typeof signInSchema>;

/** `POST /api/auth/send-verification-email`: mail a new verification link to this address. */
export const resendVerificationSchema = z.object({ email, callbackURL });
export type ResendVerificationInput = z.infer<typeof resendVerificationSchema>;

/** `POST /api/auth/request-password-reset`: the answer is the same whether or not the address has an account. */
export const requestPasswordResetSchema = z.object({ email });
export type RequestPasswordResetInput = z.infer<typeof requestPasswordResetSchema>;

/** `POST /api/auth/reset-password`: the token from the mailed link and the new password. */
export const resetPasswordSchema = z.object({
  token: z.string().min(1, 'is required').max(200, 'must be at most 200 characters'),
  newPassword,
});
export type ResetPasswordInput = z.infer<typeof resetPasswordSchema>;

/** The reset form: the new password twice (the second only in the app; the server gets one). */
export const resetPasswordFormSchema = z
  .object({ newPassword, repeat: z.string() })
  .refine((v) => v.newPassword === v.repeat, { path: ['repeat'], message: 'does not match the new password' });

export const sessionUserSchema = z.object({
  id: z.string(),
  name: z.string(),
  email: z.string(),
});
export type SessionUser = z.infer<typeof sessionUserSchema>;
