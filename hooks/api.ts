import { QueryClient } from '@tanstack/react-query';
import { ApiError, createApiClient } from '@/shared/api-client';

/** The app's one API client: same origin, session cookie. */
export const api = createApiClient();

export const queryClient = new QueryClient({
  defaultOptions: {
    queries: {
      staleTime: 15_000,
      // Client errors (401, 403, 404, validation) will not change on retry.
      retry: (count, error) => !(error instanceof ApiError && error.status >= 400 && error.status < 500) && count < 2,
    },
  },
});

export const keys = {
  me: ['me'] as const,
  group: (id: string) => ['groups', id] as const,
  members: (groupId: string) => ['groups', groupId, 'members'] as const,
  invitations: (groupId: string) => ['groups', groupId, 'invitations'] as const,
  invitation: (token: string) => ['invitation', token] as const,
  inbox: ['dev', 'inbox'] as const,
  /** Every results list (group, all, public) starts with 'results', so one invalidation refreshes them. */
  results: ['results'] as const,
  resultList: (query: object) => ['results', 'list', query] as const,
  publicResults: (query: object) => ['results', 'public', query] as const,
  result: (groupId: string, resultId: string) => ['results', 'detail', groupId, resultId] as const,
  resultVersion: (groupId: string, resultId: string, version: number) => ['results', 'detail', groupId, resultId, 'v', version] as const,
  permalink: (slug: string, version: number) => ['results', 'link', slug, version] as const,
  /** `/r/<slug>`: whichever version is current; under 'results', so a publish refreshes it. */
  latestPermalink: (slug: string) => ['results', 'link', slug, 'latest'] as const,
  tokens: ['tokens'] as const,
};
