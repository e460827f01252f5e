/** What the scan routes answer (read models), shared by server and app. */
import type { ClsSample, ExpectedLimits } from './counting-model';
import type { ScanMeta, ScanOptions } from './scans';

export type ScanState = 'queued' | 'running' | 'done' | 'failed' | 'cancelled';
export type ScanPointState = 'queued' | 'done' | 'failed' | 'cancelled';

export type ScanSummary = {
  id: string;
  state: ScanState;
  title: string;
  totalPoints: number;
  donePoints: number;
  failedPoints: number;
  resultId: string | null;
  resultVersion: number | null;
  createdAt: string;
  startedAt: string | null;
  finishedAt: string | null;
};

export type ScanPointSummary = {
  index: number;
  x: number;
  /** The second parameter (scans over two parameters), else null. */
  y: number | null;
  sigmaNominal: number | null;
  state: ScanPointState;
  observed: number | null;
  expected: ExpectedLimits | null;
  sigmaB: { observed: number; expected: ExpectedLimits } | null;
  warnings: string[] | null;
  error: { field: string; reason: string } | null;
  computeMs: number | null;
  /** Tasks of the point (1, or its chunks of pseudo-experiments) done and in all; how many run now. */
  tasks: { done: number; total: number; running: number };
  /** When the point's retry is due (ISO time; already past when it waits for a free worker), or null. */
  retryAt: string | null;
};

export type ScanDetail = Omit<ScanSummary, 'title'> & {
  groupId: string;
  title: string;
  /** With `yName`/`yUnit` when the scan is over two parameters. */
  meta: ScanMeta;
  options: ScanOptions;
  elapsedSeconds: number;
  /**
   * Estimated seconds left while queued or running (null before anything finished): the pace so
   * far, but at least until the last retry that a point waits for is due (shared/scans/progress.ts).
   */
  etaSeconds: number | null;
  /** When the last retry that a point waits for is due (ISO time), or null when none waits. */
  retryAt: string | null;
  /** The server's clock when this answer was made (retry times are on it). */
  now: string;
  error: string | null;
  sourceName: string | null;
  points: ScanPointSummary[];
};

/** One point with its diagnostics: the CLs curve, μ̂ and the fitted nuisance parameters. */
export type ScanPointDetail = {
  index: number;
  x: number;
  /** The second parameter (scans over two parameters), else null. */
  y: number | null;
  sigmaNominal: number | null;
  state: ScanPointState;
  model: Record<string, unknown>;
  result:
    | {
        observed: number;
        expected: ExpectedLimits;
        muHat: number;
        cls?: ClsSample[];
        warnings: string[];
        cl: number;
        method: string;
        observedError?: number;
        sigmaB?: { observed: number; expected: ExpectedLimits };
        fit?: { muHat: number; muError: number; converged: boolean; pulls: { name: string; value: number; error: number; valueAtZero: number }[] } | null;
      }
    | null;
  error: { field: string; reason: string } | null;
  attempts: number;
  computeMs: number | null;
  /**
   * Pseudo-experiment scans: the point's pseudo-experiments per hypothesis (`toys`) and the most a
   * rerun of it may ask for (`maxToys`: the scan start's cost rule and the plan's queue limit for one
   * point); null for asymptotic scans.
   */
  rerun: { toys: number; maxToys: number } | null;
};
