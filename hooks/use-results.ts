import { keepPreviousData, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { PublicResultListQuery, ResultListQuery } from '@/shared/schemas/results';
import type { CreateCombinationInput, CreateEnvelopeInput } from '@/shared/schemas/combine';
import { api, keys } from './api';

/** A page of results visible to the caller (their groups' and everyone's public ones). */
export function useResults(query: ResultListQuery, enabled = true) {
  return useQuery({
    queryKey: keys.resultList(query),
    queryFn: () => api.results.list(query),
    placeholderData: keepPreviousData,
    enabled,
  });
}

/** Public published results, for anyone (signed in or not). */
export function usePublicResults(query: PublicResultListQuery, enabled = true) {
  return useQuery({
    queryKey: keys.publicResults(query),
    queryFn: () => api.publicResults.list(query),
    placeholderData: keepPreviousData,
    enabled,
  });
}

export function useResult(groupId: string, resultId: string) {
  return useQuery({ queryKey: keys.result(groupId, resultId), queryFn: () => api.results.get(groupId, resultId), enabled: !!groupId && !!resultId });
}

export function useResultVersion(groupId: string, resultId: string, version: number | undefined) {
  return useQuery({
    queryKey: keys.resultVersion(groupId, resultId, version ?? 0),
    queryFn: () => api.results.version(groupId, resultId, version!),
    enabled: !!groupId && !!resultId && !!version,
  });
}

/** A version by its permanent link; works signed out for public results. */
export function usePermalink(slug: string, version: number | null) {
  return useQuery({ queryKey: keys.permalink(slug, version ?? 0), queryFn: () => api.results.byLink(slug, version!), enabled: !!slug && !!version });
}

/** `/r/<slug>`: the newest published version the caller may see; works signed out for public results. */
export function useLatestPermalink(slug: string) {
  return useQuery({ queryKey: keys.latestPermalink(slug), queryFn: () => api.results.latestByLink(slug), enabled: !!slug });
}

/** After any change to a result, every list and detail of results may be stale. */
function useRefreshResults() {
  const qc = useQueryClient();
  return () => qc.invalidateQueries({ queryKey: keys.results });
}

export function useCreateResult(groupId: string) {
  const refresh = useRefreshResults();
  return useMutation({ mutationFn: (form: FormData) => api.results.create(groupId, form), onSuccess: () => refresh() });
}

export function useAddVersion(groupId: string, resultId: string) {
  const refresh = useRefreshResults();
  return useMutation({ mutationFn: (form: FormData) => api.results.addVersion(groupId, resultId, form), onSuccess: () => refresh() });
}

/** Builds a best-expected envelope (a new draft result, or a new version of the envelope `resultId`). */
export function useCreateEnvelope(groupId: string) {
  const refresh = useRefreshResults();
  return useMutation({ mutationFn: (input: CreateEnvelopeInput) => api.results.createEnvelope(groupId, input), onSuccess: () => refresh() });
}

/**
 * The envelope of the picked inputs as it would be stored, recomputed when they change (nothing
 * is stored); its error carries the refusals naming `inputs.N`.
 */
export function useEnvelopePreview(groupId: string, inputs: { resultId: string; version: number }[]) {
  return useQuery({
    queryKey: ['results', 'envelope-preview', groupId, inputs],
    queryFn: () => api.results.previewEnvelope(groupId, { inputs }),
    enabled: !!groupId && inputs.length >= 2,
    retry: false,
  });
}

/** A joint combination's plan for the picked inputs (a dry run: nothing is started or stored). */
export function useCombinationPlan(groupId: string, inputs: { resultId: string; version: number }[], unlinked: string[]) {
  return useQuery({
    queryKey: ['results', 'combination-plan', groupId, inputs, unlinked],
    queryFn: () => api.results.createCombination(groupId, { inputs, unlinked, dryRun: true }),
    enabled: !!groupId && inputs.length >= 2,
    retry: false,
  });
}

/** Starts a joint combination (a scan of the group); the answer is the started scan. */
export function useStartCombination(groupId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: CreateCombinationInput) => api.results.createCombination(groupId, { ...input, dryRun: false }),
    onSuccess: () => qc.invalidateQueries({ queryKey: ['groups', groupId, 'scans'] }),
  });
}

export function usePublishVersion(groupId: string, resultId: string) {
  const refresh = useRefreshResults();
  return useMutation({
    mutationFn: (v: { version: number; isPublic: boolean }) => api.results.publish(groupId, resultId, v.version, { public: v.isPublic }),
    onSuccess: () => refresh(),
  });
}

export function useRetractVersion(groupId: string, resultId: string) {
  const refresh = useRefreshResults();
  return useMutation({
    mutationFn: (v: { version: number; reason: string }) => api.results.retract(groupId, resultId, v.version, v.reason),
    onSuccess: () => refresh(),
  });
}

export function useSetVisibility(groupId: string, resultId: string) {
  const refresh = useRefreshResults();
  return useMutation({ mutationFn: (isPublic: boolean) => api.results.setVisibility(groupId, resultId, isPublic), onSuccess: () => refresh() });
}

/** Deletes a draft version; a result whose only version is that draft goes with it. */
export function useDeleteDraft(groupId: string, resultId: string) {
  const refresh = useRefreshResults();
  return useMutation({
    mutationFn: async (v: { version: number; onlyVersion: boolean }) => {
      if (v.onlyVersion) await api.results.remove(groupId, resultId);
      else await api.results.deleteDraft(groupId, resultId, v.version);
    },
    onSuccess: () => refresh(),
  });
}

