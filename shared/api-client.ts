import type { RequestPasswordResetInput, ResendVerificationInput, ResetPasswordInput, SignInInput, SignUpInput } from './schemas/auth';
import type { ServerLimits } from './schemas/common';
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
import type { CheckoutInput, Invoice, PlanView } from './plans';
import type {
  ApiTokenSummary,
  CreateResultInput,
  CreateVersionInput,
  ResultDetail,
  PublicResultListQuery,
  ResultListQuery,
  ResultPage,
  ResultVersion,
  UploadedVersion,
  UpdateDraftInput,
} from './schemas/results';
import type { ScanDetail, ScanPointDetail, ScanSummary } from './schemas/scan-views';
import type { CombinationAnswer, CreateCombinationInput, CreateEnvelopeInput, EnvelopePreview, EnvelopeVersion } from './schemas/combine';
import type {
  FigureDetail,
  FigureSummary,
  FigureVersionDetail,
  GroupStyleView,
  LayerDataRequest,
  LayerDataResponse,
  PublicFigureDetail,
  PublicFigureListQuery,
  PublicFigurePage,
  ResultHueView,
  TypesetRequest,
  TypesetResponse,
} from './schemas/figure-views';
import type { FigureSpecInput, HouseStyle, RenderFormat, SIZE_PRESETS, SVG_TEXT_MODES } from './schemas/figures';
import type { CreateScanInput, RerunPointInput } from './schemas/scans';

/** `?a=1&b=x` from the defined entries of a query object ('' when none). */
function qs(query: Record<string, string | number | boolean | undefined>): string {
  const parts = Object.entries(query)
    .filter(([, v]) => v !== undefined && v !== '')
    .map(([k, v]) => `${encodeURIComponent(k)}=${encodeURIComponent(String(v))}`);
  return parts.length ? `?${parts.join('&')}` : '';
}

/** Options of a render address (see `renderQuery` and `svgRenderQuery` in shared/schemas/figures.ts). */
export type RenderUrlOptions = { version?: number; size?: keyof typeof SIZE_PRESETS; dpi?: number; text?: (typeof SVG_TEXT_MODES)[number]; download?: boolean };
const renderQs = ({ download, ...rest }: RenderUrlOptions) => qs({ ...rest, download: download ? 1 : undefined });

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
    const isForm = typeof FormData !== 'undefined' && body instanceof FormData;
    try {
      res = await doFetch(`${base}${path}`, {
        method,
        credentials: 'include',
        // A FormData body sets its own multipart content type (with the boundary).
        headers: { Accept: 'application/json', ...(body !== undefined && !isForm ? { 'Content-Type': 'application/json' } : {}), ...opts.headers },
        body: body === undefined ? undefined : isForm ? (body as FormData) : JSON.stringify(body),
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
    limits: () => call<ServerLimits>('GET', '/api/limits'),
    auth: {
      signUp: (input: SignUpInput) => call<{ user: { id: string } }>('POST', '/api/auth/sign-up/email', input),
      signIn: (input: SignInInput) => call<{ user: { id: string } }>('POST', '/api/auth/sign-in/email', input),
      signOut: () => call<{ success: boolean }>('POST', '/api/auth/sign-out', {}),
      /** Confirms the address with the token of a verification mail (no session needed). */
      verifyEmail: (token: string) => call<{ status: boolean }>('GET', `/api/auth/verify-email?token=${enc(token)}`),
      /** Mails a new verification link to the caller's own address (signed out: neutral answer). */
      sendVerificationEmail: (input: ResendVerificationInput) => call<{ status: boolean }>('POST', '/api/auth/send-verification-email', input),
      /** The same answer whether or not the address has an account. */
      requestPasswordReset: (input: RequestPasswordResetInput) => call<{ status: boolean; message: string }>('POST', '/api/auth/request-password-reset', input),
      resetPassword: (input: ResetPasswordInput) => call<{ status: boolean }>('POST', '/api/auth/reset-password', input),
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
    results: {
      /** Results visible to the caller: their groups' (all states) and everyone's public published ones. */
      list: (query: ResultListQuery = {}) => call<ResultPage>('GET', `/api/results${qs(query)}`),
      listInGroup: (groupId: string, query: Omit<ResultListQuery, 'groupId'> = {}) =>
        call<ResultPage>('GET', `/api/groups/${enc(groupId)}/results${qs(query)}`),
      /** What the group may pin in its figures: its own results (any state) and other groups' public ones (no drafts). */
      listPinnable: (groupId: string, query: Omit<ResultListQuery, 'groupId'> = {}) =>
        call<ResultPage>('GET', `/api/groups/${enc(groupId)}/pinnable-results${qs(query)}`),
      /** JSON body, or FormData with `file` (CSV or the project's JSON), `meta` (JSON text) and optional `mapping` (JSON text). */
      create: (groupId: string, input: CreateResultInput | FormData) => call<UploadedVersion>('POST', `/api/groups/${enc(groupId)}/results`, input),
      get: (groupId: string, resultId: string) => call<ResultDetail>('GET', `/api/groups/${enc(groupId)}/results/${enc(resultId)}`),
      setVisibility: (groupId: string, resultId: string, isPublic: boolean) =>
        call<ResultDetail>('PATCH', `/api/groups/${enc(groupId)}/results/${enc(resultId)}`, { public: isPublic }),
      remove: (groupId: string, resultId: string) => call<void>('DELETE', `/api/groups/${enc(groupId)}/results/${enc(resultId)}`),
      addVersion: (groupId: string, resultId: string, input: CreateVersionInput | FormData) =>
        call<UploadedVersion>('POST', `/api/groups/${enc(groupId)}/results/${enc(resultId)}/versions`, input),
      version: (groupId: string, resultId: string, version: number) =>
        call<ResultVersion>('GET', `/api/groups/${enc(groupId)}/results/${enc(resultId)}/versions/${version}`),
      updateDraft: (groupId: string, resultId: string, version: number, input: UpdateDraftInput) =>
        call<ResultVersion>('PATCH', `/api/groups/${enc(groupId)}/results/${enc(resultId)}/versions/${version}`, input),
      deleteDraft: (groupId: string, resultId: string, version: number) =>
        call<void>('DELETE', `/api/groups/${enc(groupId)}/results/${enc(resultId)}/versions/${version}`),
      publish: (groupId: string, resultId: string, version: number, input: { public?: boolean } = {}) =>
        call<ResultVersion>('POST', `/api/groups/${enc(groupId)}/results/${enc(resultId)}/versions/${version}/publish`, input),
      retract: (groupId: string, resultId: string, version: number, reason: string) =>
        call<ResultVersion>('POST', `/api/groups/${enc(groupId)}/results/${enc(resultId)}/versions/${version}/retract`, { reason }),
      /**
       * The best-expected envelope of 2–20 versions the group may build on, stored as a draft (or a
       * new version of `resultId`); the answer adds which input was chosen at every point.
       */
      createEnvelope: (groupId: string, input: CreateEnvelopeInput) => call<EnvelopeVersion>('POST', `/api/groups/${enc(groupId)}/envelopes`, input),
      /** The envelope as it would be stored, without storing it (the builder's check and preview). */
      previewEnvelope: (groupId: string, input: Omit<CreateEnvelopeInput, 'resultId'>) => call<EnvelopePreview>('POST', `/api/groups/${enc(groupId)}/envelopes/preview`, input),
      /**
       * A joint combination of scan-computed versions, started as a scan; with `dryRun: true` only
       * its plan (nuisance parameters per input, common and missing parameter values).
       */
      createCombination: (groupId: string, input: CreateCombinationInput) => call<CombinationAnswer>('POST', `/api/groups/${enc(groupId)}/combinations`, input),
      /** A version by its permanent link, for anyone allowed to see it (public, or a member of its group). */
      byLink: (slug: string, version: number) => call<ResultVersion>('GET', `/api/results/${enc(slug)}/v${version}`),
      /** `/r/<slug>`: the newest published version the caller may see (404 `not_published` when the result has none). */
      latestByLink: (slug: string) => call<ResultVersion>('GET', `/api/results/${enc(slug)}/latest`),
      exportUrl: (groupId: string, resultId: string, version: number, format: 'csv' | 'json') =>
        `${base}/api/groups/${enc(groupId)}/results/${enc(resultId)}/versions/${version}/export.${format}`,
      /** The contour lines of a two-parameter version (404 for one parameter). */
      contoursUrl: (groupId: string, resultId: string, version: number, format: 'csv' | 'json') =>
        `${base}/api/groups/${enc(groupId)}/results/${enc(resultId)}/versions/${version}/contours.${format}`,
    },
    publicResults: {
      list: (query: PublicResultListQuery = {}) => call<ResultPage>('GET', `/api/public/results${qs(query)}`),
      get: (slug: string, version: number) => call<ResultVersion>('GET', `/api/public/results/${enc(slug)}/v${version}`),
      latest: (slug: string) => call<ResultVersion>('GET', `/api/public/results/${enc(slug)}/latest`),
      exportUrl: (slug: string, version: number, format: 'csv' | 'json') => `${base}/api/public/results/${enc(slug)}/v${version}/export.${format}`,
      contoursUrl: (slug: string, version: number, format: 'csv' | 'json') => `${base}/api/public/results/${enc(slug)}/v${version}/contours.${format}`,
    },
    scans: {
      list: (groupId: string) => call<{ scans: ScanSummary[] }>('GET', `/api/groups/${enc(groupId)}/scans`),
      /** JSON body, or FormData with `file` (scan CSV or JSON), `meta` and `options` (JSON text), optional `resultId`. */
      start: (groupId: string, input: CreateScanInput | FormData) => call<ScanDetail>('POST', `/api/groups/${enc(groupId)}/scans`, input),
      get: (groupId: string, scanId: string) => call<ScanDetail>('GET', `/api/groups/${enc(groupId)}/scans/${enc(scanId)}`),
      cancel: (groupId: string, scanId: string) => call<ScanDetail>('POST', `/api/groups/${enc(groupId)}/scans/${enc(scanId)}/cancel`, {}),
      point: (groupId: string, scanId: string, index: number) =>
        call<ScanPointDetail>('GET', `/api/groups/${enc(groupId)}/scans/${enc(scanId)}/points/${index}`),
      /** A new scan: the other points copied, this one queued with `toys` pseudo-experiments per hypothesis. */
      rerunPoint: (groupId: string, scanId: string, index: number, input: RerunPointInput) =>
        call<ScanDetail>('POST', `/api/groups/${enc(groupId)}/scans/${enc(scanId)}/points/${index}/rerun`, input),
      inputsUrl: (groupId: string, scanId: string) => `${base}/api/groups/${enc(groupId)}/scans/${enc(scanId)}/inputs.json`,
    },
    figures: {
      list: (groupId: string) => call<{ figures: FigureSummary[] }>('GET', `/api/groups/${enc(groupId)}/figures`),
      create: (groupId: string, input: { spec: FigureSpecInput; public?: boolean }) => call<FigureDetail>('POST', `/api/groups/${enc(groupId)}/figures`, input),
      /** The latest version's spec and layers (with "newer published version" per layer), and the version history. */
      get: (groupId: string, figureId: string) => call<FigureDetail>('GET', `/api/groups/${enc(groupId)}/figures/${enc(figureId)}`),
      version: (groupId: string, figureId: string, version: number) =>
        call<FigureVersionDetail>('GET', `/api/groups/${enc(groupId)}/figures/${enc(figureId)}/versions/${version}`),
      /** Saves the spec as the next version. */
      save: (groupId: string, figureId: string, input: { spec: FigureSpecInput; note?: string }) =>
        call<FigureDetail>('PUT', `/api/groups/${enc(groupId)}/figures/${enc(figureId)}`, input),
      setVisibility: (groupId: string, figureId: string, isPublic: boolean) =>
        call<FigureDetail>('PATCH', `/api/groups/${enc(groupId)}/figures/${enc(figureId)}`, { public: isPublic }),
      remove: (groupId: string, figureId: string) => call<void>('DELETE', `/api/groups/${enc(groupId)}/figures/${enc(figureId)}`),
      duplicate: (groupId: string, figureId: string, input: { title?: string } = {}) =>
        call<FigureDetail>('POST', `/api/groups/${enc(groupId)}/figures/${enc(figureId)}/duplicate`, input),
      /** A plain-language copy for the public (outreach theme, one band, plain labels). */
      outreach: (groupId: string, figureId: string, input: { size?: 'web' | 'slide'; title?: string } = {}) =>
        call<FigureDetail>('POST', `/api/groups/${enc(groupId)}/figures/${enc(figureId)}/outreach`, input),
      /** The composer's preview data: each layer as the group may draw it (unavailable ones say only that), with its hue. */
      layerData: (groupId: string, input: LayerDataRequest) => call<LayerDataResponse>('POST', `/api/groups/${enc(groupId)}/layer-data`, input),
      /** Labels typeset by the server (paths and metrics by labelKey), for the composer's preview. */
      typeset: (input: TypesetRequest) => call<TypesetResponse>('POST', '/api/typeset', input),
      /**
       * Render address (members of the figure's group, or anyone for a public figure); answers image bytes, not JSON.
       * `download`: answered as an attachment (saved, not shown); `text` (SVG): `editable` writes labels as text.
       */
      renderUrl: (figureId: string, format: RenderFormat, opts: RenderUrlOptions = {}) => `${base}/api/figures/${enc(figureId)}/render.${format}${renderQs(opts)}`,
      exportUrl: (figureId: string, kind: 'csv' | 'caption', version?: number) =>
        `${base}/api/figures/${enc(figureId)}/${kind === 'csv' ? 'export.csv' : 'caption.txt'}${qs({ version })}`,
      style: (groupId: string) => call<GroupStyleView>('GET', `/api/groups/${enc(groupId)}/style`),
      setStyle: (groupId: string, style: HouseStyle) => call<GroupStyleView>('PUT', `/api/groups/${enc(groupId)}/style`, { style }),
      setHue: (groupId: string, resultId: string, hue: number) => call<ResultHueView>('PUT', `/api/groups/${enc(groupId)}/results/${enc(resultId)}/hue`, { hue }),
    },
    publicFigures: {
      list: (query: PublicFigureListQuery = {}) => call<PublicFigurePage>('GET', `/api/public/figures${qs(query)}`),
      /** A public figure's page: title, group, caption, the pinned versions the public may see, hidden-layer count. */
      get: (figureId: string) => call<PublicFigureDetail>('GET', `/api/public/figures/${enc(figureId)}`),
      renderUrl: (figureId: string, format: RenderFormat, opts: RenderUrlOptions = {}) => `${base}/api/public/figures/${enc(figureId)}/render.${format}${renderQs(opts)}`,
    },
    tokens: {
      list: () => call<{ tokens: ApiTokenSummary[] }>('GET', '/api/tokens'),
      /** The token text is in the answer once and never again. */
      create: (name: string) => call<ApiTokenSummary & { token: string }>('POST', '/api/tokens', { name }),
      revoke: (tokenId: string) => call<void>('DELETE', `/api/tokens/${enc(tokenId)}`),
    },
    billing: {
      /** The plan in force, usage by kind, quota and read-only state (every member). */
      plan: (groupId: string) => call<PlanView>('GET', `/api/groups/${enc(groupId)}/plan`),
      invoices: (groupId: string) => call<{ invoices: Invoice[] }>('GET', `/api/groups/${enc(groupId)}/invoices`),
      /** One invoice as a PDF (owners). */
      invoicePdfUrl: (groupId: string, invoiceId: string) => `${base}/api/groups/${enc(groupId)}/invoices/${enc(invoiceId)}.pdf`,
      /** A checkout page address at the payment provider (owners); open it in the browser. */
      checkout: (groupId: string, input: CheckoutInput) => call<{ url: string }>('POST', `/api/groups/${enc(groupId)}/billing/checkout`, input),
      /** A billing portal address (owners of a group that has paid before). */
      portal: (groupId: string) => call<{ url: string }>('POST', `/api/groups/${enc(groupId)}/billing/portal`, {}),
    },
  };
}
export type ApiClient = ReturnType<typeof createApiClient>;
