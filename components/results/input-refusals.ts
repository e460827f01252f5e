import { ApiError } from '@/shared/api-client';

/**
 * The server's refusals of a derived result's inputs, by field: `inputs.N…` per input (shown
 * beside it), the rest (title, the list, unlinked names) as "field: message".
 */
export function inputRefusals(error: unknown): { byInput: Map<number, string>; other: string[] } {
  const byInput = new Map<number, string>();
  const other: string[] = [];
  if (!(error instanceof ApiError)) return { byInput, other };
  for (const d of error.details) {
    const m = /^inputs\.(\d+)/.exec(d.field);
    if (m) byInput.set(Number(m[1]), d.message);
    else other.push(`${d.field}: ${d.message}`);
  }
  return { byInput, other };
}
