import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { api, keys } from './api';

export function useApiTokens() {
  return useQuery({ queryKey: keys.tokens, queryFn: async () => (await api.tokens.list()).tokens });
}

/** The answer carries the token text once; the caller shows it and must not store it. */
export function useCreateApiToken() {
  const qc = useQueryClient();
  return useMutation({ mutationFn: (name: string) => api.tokens.create(name), onSuccess: () => qc.invalidateQueries({ queryKey: keys.tokens }) });
}

export function useRevokeApiToken() {
  const qc = useQueryClient();
  return useMutation({ mutationFn: (tokenId: string) => api.tokens.revoke(tokenId), onSuccess: () => qc.invalidateQueries({ queryKey: keys.tokens }) });
}
