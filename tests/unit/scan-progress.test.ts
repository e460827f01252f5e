/**
 * The time left of a scan and its retries in words (shared/scans/progress.ts).
 */
import { clockTime, duration, estimateSecondsLeft, retryNotice } from '@/shared/scans/progress';

describe('estimateSecondsLeft', () => {
  test('the pace so far times the open tasks', () => {
    // 10 s for 4 of 10 tasks: 2.5 s each, 6 left → 15 s (common practice: linear extrapolation).
    expect(estimateSecondsLeft({ elapsedSeconds: 10, tasks: 10, openTasks: 6, retryDueInSeconds: [] })).toBeCloseTo(15, 10);
  });

  test('nothing finished and no retry: unknown', () => {
    expect(estimateSecondsLeft({ elapsedSeconds: 3, tasks: 5, openTasks: 5, retryDueInSeconds: [] })).toBeNull();
  });

  test('a retry due later than the pace says holds the scan until it is due, plus one task', () => {
    // 1 s for the one finished task of three: the pace says 2 s, the retry 60 s + that task.
    expect(estimateSecondsLeft({ elapsedSeconds: 1, tasks: 3, openTasks: 2, retryDueInSeconds: [60] })).toBeCloseTo(61, 10);
    // The last of several retries counts; one already due adds nothing but its task.
    expect(estimateSecondsLeft({ elapsedSeconds: 1, tasks: 3, openTasks: 2, retryDueInSeconds: [-4, 30, 12] })).toBeCloseTo(31, 10);
    // A retry sooner than the pace changes nothing.
    expect(estimateSecondsLeft({ elapsedSeconds: 100, tasks: 10, openTasks: 5, retryDueInSeconds: [3] })).toBeCloseTo(100, 10);
    // Before anything finished, the wait is all that is known.
    expect(estimateSecondsLeft({ elapsedSeconds: 0, tasks: 2, openTasks: 2, retryDueInSeconds: [20] })).toBe(20);
  });
});

describe('retryNotice', () => {
  const now = new Date(2026, 11, 2, 14, 2, 30);
  test('one point: when its retry is due, in the local clock, and how long that is', () => {
    const at = new Date(now.getTime() + 51_000);
    expect(retryNotice([{ x: 900, retryAt: null }, { x: 1100, retryAt: at.toISOString() }], now)).toBe(
      `The point at x = 1100 waits for a retry (the last attempt failed or its worker stopped), due at ${clockTime(at)}, in 51 s. The time left counts that wait.`,
    );
    expect(clockTime(at)).toBe('14:03:21');
  });

  test('several points: the last due time; a retry already due waits for a worker', () => {
    const a = new Date(now.getTime() + 5_000).toISOString();
    const b = new Date(now.getTime() + 200_000).toISOString();
    expect(retryNotice([{ x: 1, retryAt: a }, { x: 2, retryAt: b }], now)).toMatch(/^2 points wait for a retry .* in 3 min 20 s\./);
    expect(retryNotice([{ x: 1, retryAt: new Date(now.getTime() - 1000).toISOString() }], now)).toMatch(/due now .* when a worker is free/);
    expect(retryNotice([{ x: 1, retryAt: null }], now)).toBeNull();
    // A point of a two-parameter scan is named by both coordinates.
    expect(retryNotice([{ x: 1000, y: 150, retryAt: a }], now)).toMatch(/^The point at \(x, y\) = \(1000, 150\) waits for a retry/);
  });

  test('durations read as people say them', () => {
    expect(duration(0.4)).toBe('0 s');
    expect(duration(89)).toBe('89 s');
    expect(duration(90)).toBe('1 min 30 s');
  });
});
