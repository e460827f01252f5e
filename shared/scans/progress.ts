/**
 * A scan's time left and its retries in words: pure functions shared by the server (the status
 * payload) and the app (the progress screen).
 */

export type ProgressInput = {
  /** Seconds since the scan's first task started. */
  elapsedSeconds: number;
  /** The scan's tasks (a point each, or a chunk of a point's pseudo-experiments) and those not finished yet. */
  tasks: number;
  openTasks: number;
  /** Per task waiting for a retry: seconds until it is due (0 or less: due now). */
  retryDueInSeconds: number[];
};

/**
 * Seconds left, or null before anything can be said. The pace so far (elapsed time per finished
 * task, which includes the time the fair queue gave other groups) times the open tasks; but never
 * less than the wait for the last retry that is due plus one task's time, since a scan whose last
 * point waits for its retry cannot finish before that retry has run (common practice).
 */
export function estimateSecondsLeft(p: ProgressInput): number | null {
  const finished = p.tasks - p.openTasks;
  const perTask = finished > 0 ? p.elapsedSeconds / finished : null;
  const atPace = perTask !== null ? perTask * p.openTasks : null;
  const untilRetry = p.retryDueInSeconds.length ? Math.max(0, ...p.retryDueInSeconds) + (perTask ?? 0) : null;
  if (atPace === null && untilRetry === null) return null;
  return Math.max(atPace ?? 0, untilRetry ?? 0);
}

const two = (n: number) => String(n).padStart(2, '0');
/** "14:03:21" in the reader's local time. */
export function clockTime(d: Date): string {
  return `${two(d.getHours())}:${two(d.getMinutes())}:${two(d.getSeconds())}`;
}

/** "45 s", "3 min 20 s". */
export function duration(seconds: number): string {
  const s = Math.max(0, Math.round(seconds));
  return s < 90 ? `${s} s` : `${Math.floor(s / 60)} min ${s % 60} s`;
}

/**
 * What the points waiting for a retry mean for the reader, or null when none waits: when the
 * retry is due (and in how long), or that it is due and waits for a free worker.
 */
export function retryNotice(points: ReadonlyArray<{ x: number; y?: number | null; retryAt: string | null }>, now: Date): string | null {
  const waiting = points.filter((p) => p.retryAt !== null);
  if (waiting.length === 0) return null;
  const last = new Date(Math.max(...waiting.map((p) => Date.parse(p.retryAt!))));
  const one = waiting[0]!;
  // A point of a two-parameter scan is named by both coordinates.
  const who = waiting.length === 1 ? `The point at ${one.y !== undefined && one.y !== null ? `(x, y) = (${one.x}, ${one.y})` : `x = ${one.x}`} waits` : `${waiting.length} points wait`;
  const wait = (last.getTime() - now.getTime()) / 1000;
  if (wait <= 0) return `${who} for a retry that is due now (its last attempt failed or its worker stopped); it runs when a worker is free.`;
  return `${who} for a retry (the last attempt failed or its worker stopped), due at ${clockTime(last)}, in ${duration(wait)}. The time left counts that wait.`;
}
