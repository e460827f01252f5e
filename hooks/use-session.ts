import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { ApiError } from '@/shared/api-client';
import type { RequestPasswordResetInput, ResendVerificationInput, ResetPasswordInput, SignInInput, SignUpInput } from '@/shared/schemas/auth';
import type { Me } from '@/shared/schemas/groups';
import { api, keys } from './api';

/** The signed-in user and their groups; `data` is null when signed out. */
export function useMe() {
  return useQuery<Me | null>({
    queryKey: keys.me,
    queryFn: async () => {
      try {
        return await api.me();
      } catch (e) {
        if (e instanceof ApiError && e.status === 401) return null;
        throw e;
      }
    },
  });
}

export function useSignIn() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: SignInInput) => api.auth.signIn(input),
    onSuccess: () => qc.invalidateQueries({ queryKey: keys.me }),
  });
}

export function useSignUp() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: SignUpInput) => api.auth.signUp(input),
    onSuccess: () => qc.invalidateQueries({ queryKey: keys.me }),
  });
}

export function useSignOut() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: () => api.auth.signOut(),
    onSuccess: () => {
      qc.clear();
      qc.setQueryData(keys.me, null);
    },
  });
}

/** Mails a new verification link; `me` is refetched so a verification done meanwhile shows. */
export function useResendVerification() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: ResendVerificationInput) => api.auth.sendVerificationEmail(input),
    onSettled: () => qc.invalidateQueries({ queryKey: keys.me }),
  });
}

export function useVerifyEmail() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (token: string) => api.auth.verifyEmail(token),
    onSuccess: () => qc.invalidateQueries({ queryKey: keys.me }),
  });
}

/** Asks for a reset link; the answer is the same whether or not the address has an account. */
export function useRequestPasswordReset() {
  return useMutation({ mutationFn: (input: RequestPasswordResetInput) => api.auth.requestPasswordReset(input) });
}

/** Sets the new password; the server ends every session of the account, this one included. */
export function useResetPassword() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: ResetPasswordInput) => api.auth.resetPassword(input),
    onSuccess: () => {
      qc.clear();
      qc.setQueryData(keys.me, null);
    },
  });
}
