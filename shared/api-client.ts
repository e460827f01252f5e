import type { SignInInput, SignUpInput } from './schemas/auth';
import type {
  ChangeRoleInput,
  CreateGroupInput,
  Group,
  Invitation,
  InvitationPreview,
  InviteInput,
  MailMessage,
  Me,
  Member,
  UpdateGroupInput,
} from './schemas/groups';
import type { ErrorDetail } from './errors';

/** An error answered by the API, with its code, message and per-field details. */
export class ApiError extends Error {
  constructor(
    readonly status: number,
    readonly code: string,
    message: string,
    readonly details: ErrorDetail[] = [],
  ) {
    super(message);
  }
  /** The first message for one field (e.g. "email"), for showing beside that field. */
  fieldMessage(field: string): string | undefined {
    return this.details.find((d) => d.field === field)?.message;
  }
}

type Method = 'GET' | 'POST' | 'PATCH' | 'PUT' | 'DELETE';

export type ApiClientOptions = {
  /** '' for same origin (the web app), or e.g. 'http://127.0.0.1:8080' for scripts. */
  baseUrl?: string;
  fetch?: typeof fetch;
  headers?: Record<string, string>;
};

/**
 * The one typed API client, used by the app's react-query hooks and by scripts. Every method
 * resolves with the parsed JSON or rejects with an ApiError.
 */
export function createApiClient(opts: ApiClientOptions = {}) {
  const base = opts.baseUrl ?? '';
  const doFetch = opts.fetch ?? ((...a: Parameters<typeof fetch>) => fetch(...a));

  async function call<T>(method: Method, path: string, body?: unknown): Promise<T> {
    let res: Response;
    try {
      res = await doFetch(`${base}${path}`, {
        method,
        credentials: 'include',
        headers: { Accept: 'application/json', ...(body !== undefined ? { 'Content-Type': 'application/json' } : {}), ...opts.headers },
        body: body !== undefined ? JSON.stringify(body) : undefined,
      });
    } catch {
      throw new ApiError(0, 'network', 'Cannot reach the server; check your connection and try again');
    }
    if (res.status === 204) return undefined as T;
    const text = await res.text();
    let json: unknown = undefined;
    try {
      json = text ? JSON.parse(text) : undefined;
    } catch {
      /* not JSON: handled below */
    }
    if (!res.ok) {
      const e = (json as { error?: { code?: string; message?: string; details?: ErrorDetail[] } } | undefined)?.error;
      throw new ApiError(res.status, e?.code ?? 'http_error', e?.message ?? `The server answered ${res.status}`, e?.details ?? []);
    }
    return json as T;
  }

  const enc = encodeURIComponent;
  return {
    health: () => call<{ ok: boolean; db: string }>('GET', '/api/health'),
    auth: {
      signUp: (input: SignUpInput) => call<{ user: { id: string } }>('POST', '/api/auth/sign-up/email', input),
      signIn: (input: SignInInput) => call<{ user: { id: string } }>('POST', '/api/auth/sign-in/email', input),
      signOut: () => call<{ success: boolean }>('POST', '/api/auth/sign-out', {}),
    },
    me: () => call<Me>('GET', '/api/me'),
    groups: {
      list: () => call<{ groups: Group[] }>('GET', '/api/groups'),
      create: (input: CreateGroupInput) => call<Group>('POST', '/api/groups', input),
      get: (groupId: string) => call<Group>('GET', `/api/groups/${enc(groupId)}`),
      update: (groupId: string, input: UpdateGroupInput) => call<Group>('PATCH', `/api/groups/${enc(groupId)}`, input),
      remove: (groupId: string) => call<void>('DELETE', `/api/groups/${enc(groupId)}`),
    },
    members: {
      list: (groupId: string) => call<{ members: Member[] }>('GET', `/api/groups/${enc(groupId)}/members`),
      changeRole: (groupId: string, userId: string, input: ChangeRoleInput) =>
        call<{ members: Member[] }>('PATCH', `/api/groups/${enc(groupId)}/members/${enc(userId)}`, input),
      remove: (groupId: string, userId: string) => call<void>('DELETE', `/api/groups/${enc(groupId)}/members/${enc(userId)}`),
    },
    invitations: {
      list: (groupId: string) => call<{ invitations: Invitation[] }>('GET', `/api/groups/${enc(groupId)}/invitations`),
      create: (groupId: string, input: InviteInput) => call<{ id: string }>('POST', `/api/groups/${enc(groupId)}/invitations`, input),
      revoke: (groupId: string, invitationId: string) => call<void>('DELETE', `/api/groups/${enc(groupId)}/invitations/${enc(invitationId)}`),
      preview: (token: string) => call<InvitationPreview>('GET', `/api/invitations/${enc(token)}`),
      accept: (token: string) => call<{ groupId: string }>('POST', `/api/invitations/${enc(token)}/accept`),
    },
    dev: {
      inbox: () => call<{ messages: MailMessage[] }>('GET', '/api/dev/inbox'),
    },
  };
}
export type ApiClient = ReturnType<typeof createApiClient>;
