/**
 * The one error type of the statistics engine for bad input: it names the field (a path such as
 * `systematics[1].effects.dijet[2]`) and the reason in plain words.
 */
import type { z } from 'zod';

export interface InputProblem {
  field: string;
  reason: string;
}

/** Bad input to the statistics engine: `field` names where, `reason` says why. */
export class StatsInputError extends Error {
  readonly code = 'stats_input' as const;
  readonly field: string;
  readonly reason: string;
  /** Every problem found (the first is also in `field` and `reason`). */
  readonly problems: InputProblem[];

  constructor(field: string, reason: string, problems?: InputProblem[]) {
    super(field ? `${field} ${reason}` : reason);
    this.name = 'StatsInputError';
    this.field = field;
    this.reason = reason;
    this.problems = problems && problems.length > 0 ? problems : [{ field, reason }];
  }
}

const IDENTIFIER = /^[A-Za-z_$][A-Za-z0-9_$]*$/;

/** Formats a path like ['systematics', 1, 'effects', 'dijet', 2] as `systematics[1].effects.dijet[2]`. */
export function formatPath(path: ReadonlyArray<PropertyKey>, prefix = ''): string {
  let out = prefix;
  for (const key of path) {
    if (typeof key === 'number') out += `[${key}]`;
    else {
      const name = String(key);
      if (IDENTIFIER.test(name)) out += out ? `.${name}` : name;
      else out += `[${JSON.stringify(name)}]`;
    }
  }
  return out;
}

type Issue = z.core.$ZodIssue;

/**
 * A union (number or list of numbers) that fails reports one issue for the whole value; the
 * branch whose type matched holds the precise problem (e.g. which element is not finite).
 */
function unwrapUnion(issue: Issue): Issue[] {
  if (issue.code !== 'invalid_union' || issue.errors.length === 0) return [issue];
  const matching = issue.errors.find((branch) => branch.length > 0 && !branch.some((i) => i.code === 'invalid_type' && i.path.length === 0));
  if (!matching) return [issue];
  return matching.flatMap((inner) => unwrapUnion({ ...inner, path: [...issue.path, ...inner.path] } as Issue));
}

/** Turns zod issues into a StatsInputError (field paths optionally prefixed, e.g. "model"). */
export function errorFromZod(error: z.ZodError, prefix = ''): StatsInputError {
  const problems = error.issues.flatMap(unwrapUnion).map((issue) => ({
    field: formatPath(issue.path, prefix) || prefix || 'input',
    reason: issue.message,
  }));
  const first = problems[0] ?? { field: prefix || 'input', reason: 'is not valid' };
  return new StatsInputError(first.field, first.reason, problems);
}
