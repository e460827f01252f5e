import { formatDate, formatDateTime } from '@/shared/dates';

test('dates read the same whatever the locale: day, short month, year; times on a 24-hour clock', () => {
  expect(formatDate('2026-12-03T10:15:00Z', { utc: true })).toBe('3 Dec 2026');
  expect(formatDateTime('2026-12-03T09:05:00Z', { utc: true })).toBe('3 Dec 2026, 09:05 UTC');
  expect(formatDate(Date.UTC(2031, 2, 1) + 12 * 3600_000)).toMatch(/^(28 Feb|1 Mar) 2031$/);
  const local = new Date(2026, 0, 9, 7, 4);
  expect(formatDateTime(local)).toBe('9 Jan 2026, 07:04');
  for (const bad of [null, undefined, '', 'not a date']) {
    expect(formatDate(bad)).toBe('–');
    expect(formatDateTime(bad)).toBe('–');
  }
});
