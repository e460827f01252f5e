import { z } from 'zod';
import { email, shortText } from './common';

export const PASSWORD_MIN = 10;

export const signUpSchema = z.object({
  name: shortText(80),
  email,
  password: z
    .string()
    .min(PASSWORD_MIN, `must be at least ${PASSWORD_MIN} characters`)
    .max(128, 'must be at most 128 characters'),
  callbackURL: z.string().max(500).optional(),
});
export type SignUpInput = z.infer<typeof signUpSchema>;

export const signInSchema = z.object({
  email,
  password: z.string().min(1, 'is required').max(128, 'must be at most 128 characters'),
  rememberMe: z.boolean().optional(),
  callbackURL: z.string().max(500).optional(),
});
export type SignInInput = z.infer<typeof signInSchema>;

export const sessionUserSchema = z.object({
  id: z.string(),
  name: z.string(),
  email: z.string(),
});
export type SessionUser = z.infer<typeof sessionUserSchema>;
