import { renderCacheLine, statusLine, usageKinds, usageSummary } from '@/components/billing/plan-text';
import { effectivePlan, isReadOnly, lapseNotice, type AccountState } from '@/server/services/plans';
import { scanDraftAllowance } from '@/server/services/storage';
import { checkoutSchema, formatMoney, formatPrice, FREE_PLAN, INSTITUTIONAL_PLAN, PLANS, usageFraction } from '@/shared/plans';
import { formatBytes, GB, KB, MB } from '@/shared/bytes';

describe('formatting', () => {
  test.each([
    [0, '0 bytes'],
    [1, '1 byte'],
    [312, '312 bytes'],
    [1023, '1023 bytes'],
    [KB, '1 KB'],
    [2.56 * KB, '2.5 KB'],
    [820 * KB, '820 KB'],
    [MB, '1 MB'],
    [1.25 * MB, '1.25 MB'],
    [50 * MB, '50 MB'],
    [20 * GB, '20 GB'],
  ])('%d bytes read "%s"', (bytes, text) => {
    expect(formatBytes(bytes)).toBe(text);
  });

  test('usage just under a quota is never shown as the quota (cut, not rounded)', () => {
    expect(formatBytes(50 * MB - 1)).toBe('49.99 MB');
    expect(formatBytes(20 * GB - 1)).toBe('19.99 GB');
  });

  test('money and prices', () => {
    expect(formatMoney(4900, 'eur')).toBe('€49.00');
    expect(formatMoney(49_000, 'EUR')).toBe('€490.00');
    expect(formatMoney(1234, 'sek')).toBe('12.34 SEK');
    expect(formatPrice(INSTITUTIONAL_PLAN, 'month')).toBe('€49.00 per month');
    expect(formatPrice(FREE_PLAN, 'year')).toBe('free');
  });

  test('usage fraction', () => {
    expect(usageFraction(25 * MB, 50 * MB)).toBe(0.5);
    expect(usageFraction(60 * MB, 50 * MB)).toBeCloseTo(1.2);
    expect(usageFraction(1, 0)).toBe(0);
  });
});

describe('the plans', () => {
  test('Institutional holds more than Free in every respect, and a year costs less than twelve months', () => {
    expect(INSTITUTIONAL_PLAN.quotaBytes).toBeGreaterThan(FREE_PLAN.quotaBytes);
    expect(INSTITUTIONAL_PLAN.renderCache.maxRenders).toBeGreaterThan(FREE_PLAN.renderCache.maxRenders);
    expect(INSTITUTIONAL_PLAN.renderCache.maxAgeDays).toBeGreaterThan(FREE_PLAN.renderCache.maxAgeDays);
    expect(INSTITUTIONAL_PLAN.scanQueueLimit).toBeGreaterThan(FREE_PLAN.scanQueueLimit);
    expect(INSTITUTIONAL_PLAN.renderCache.maxBytes).toBeGreaterThan(FREE_PLAN.renderCache.maxBytes);
    // The render cache is bounded apart from the quota, and well below it.
    expect(FREE_PLAN.renderCache.maxBytes).toBeLessThan(FREE_PLAN.quotaBytes);
    expect(INSTITUTIONAL_PLAN.prices!.year).toBeLessThan(12 * INSTITUTIONAL_PLAN.prices!.month);
    expect(Object.keys(PLANS)).toEqual(['free', 'institutional']);
  });

  test('checkout takes month or year only', () => {
    expect(checkoutSchema.safeParse({ interval: 'year' }).success).toBe(true);
    expect(checkoutSchema.safeParse({ interval: 'week' }).success).toBe(false);
    expect(checkoutSchema.safeParse({}).success).toBe(false);
  });
});

describe('the plan in force', () => {
  const at = new Date('2031-03-01T00:00:00Z');
  const account = (over: Partial<NonNullable<AccountState>>): AccountState => ({ plan: 'institutional', status: 'active', currentPeriodEnd: null, lastEventAt: at, updatedAt: at, ...over });

  test('no account, or one that never paid: Free, nothing lapsed', () => {
    expect(effectivePlan(undefined)).toEqual({ plan: FREE_PLAN, lapse: null });
    expect(effectivePlan(account({ plan: 'free', status: 'none' }))).toEqual({ plan: FREE_PLAN, lapse: null });
    expect(effectivePlan(account({ status: 'incomplete' }))).toEqual({ plan: FREE_PLAN, lapse: null });
  });

  test('an active subscription: Institutional', () => {
    expect(effectivePlan(account({})).plan).toBe(INSTITUTIONAL_PLAN);
  });

  test('a failed payment or an ended plan falls back to Free and says why', () => {
    expect(effectivePlan(account({ status: 'past_due' }))).toEqual({ plan: FREE_PLAN, lapse: { reason: 'payment_failed', since: at } });
    expect(effectivePlan(account({ status: 'unpaid' })).lapse?.reason).toBe('payment_failed');
    const ended = new Date('2031-02-01T00:00:00Z');
    expect(effectivePlan(account({ plan: 'free', status: 'canceled', currentPeriodEnd: ended }))).toEqual({ plan: FREE_PLAN, lapse: { reason: 'plan_ended', since: ended } });
  });

  test('read-only only when lapsed and above the free quota', () => {
    const lapsed = effectivePlan(account({ status: 'past_due' }));
    expect(isReadOnly(lapsed, 50 * MB)).toBe(false);
    expect(isReadOnly(lapsed, 50 * MB + 1)).toBe(true);
    expect(isReadOnly(effectivePlan(undefined), 60 * MB)).toBe(false); // over quota, but nothing lapsed: plain 413s
    expect(isReadOnly(effectivePlan(account({})), 60 * MB)).toBe(false);
  });

  test('the notice says what happened, what it means and how to fix it', () => {
    const failed = lapseNotice({ reason: 'payment_failed', since: at }, 60 * MB);
    expect(failed).toContain('failed on 1 Mar 2031');
    expect(failed).toContain('60 MB');
    expect(failed).toContain('read-only');
    expect(failed).toContain('nothing was deleted');
    expect(failed).toContain('update the card under Manage billing');
    const ended = lapseNotice({ reason: 'plan_ended', since: at }, 10 * MB);
    expect(ended).toContain('ended on 1 Mar 2031');
    expect(ended).not.toContain('read-only');
    expect(ended).toContain('subscribe again');
  });

  test('a scan reserves room for its draft in proportion to its grid', () => {
    expect(scanDraftAllowance(0)).toBe(8 * KB);
    expect(scanDraftAllowance(100) - scanDraftAllowance(0)).toBe(19_200);
  });
});

describe('plan screen wording', () => {
  const usage = { totalBytes: 1.25 * MB, uploadsBytes: MB, scanInputsBytes: 0.25 * MB, rendersBytes: 3 * MB, renderCount: 1 };

  test('the usage line and the kinds add up to the counter; the render cache is apart and not counted', () => {
    expect(usageSummary({ usage, quotaBytes: 50 * MB })).toBe('1.25 MB of 50 MB used (2%)');
    expect(usageSummary({ usage: { ...usage, totalBytes: 100 }, quotaBytes: 50 * MB })).toBe('100 bytes of 50 MB used (<1%)');
    expect(usageKinds({ usage }).map((k) => [k.key, k.bytes, k.detail])).toEqual([
      ['uploads', MB, undefined],
      ['scanInputs', 0.25 * MB, undefined],
    ]);
    // Bytes the kinds do not explain are shown, not hidden.
    expect(usageKinds({ usage: { ...usage, totalBytes: 2 * MB } }).at(-1)).toMatchObject({ key: 'other', bytes: 0.75 * MB });
    expect(renderCacheLine({ usage, plan: FREE_PLAN })).toBe('Cached figure renders: 3 MB in 1 render, not counted toward the quota (at most 20 MB are kept; the least recently used go first).');
  });

  test('the status line', () => {
    const base = { plan: FREE_PLAN, interval: null, currentPeriodEnd: null } as const;
    expect(statusLine({ ...base, status: 'none' })).toBe('No paid subscription: the Free plan applies.');
    expect(statusLine({ ...base, plan: INSTITUTIONAL_PLAN, status: 'active', interval: 'year', currentPeriodEnd: '2031-05-01T12:00:00Z' })).toMatch(/^Billed yearly \(€490\.00 per year\); renews on .*2031/);
    expect(statusLine({ ...base, status: 'past_due' })).toBe('The last payment failed: the Free plan applies until it is paid.');
    expect(statusLine({ ...base, status: 'canceled', currentPeriodEnd: '2031-05-01T12:00:00Z' })).toMatch(/^The Institutional plan ended on .*2031; the Free plan applies\.$/);
  });
});
