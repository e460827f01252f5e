/**
 * Dates as the product writes them, the same on every screen, in every mail and whatever the
 * browser's language: "3 Dec 2026", and "3 Dec 2026, 14:05" with a time. The app shows times in
 * the reader's time zone; the server (mails, notices) writes UTC and says so.
 */
const MONTHS = ['Jan', 'Feb', 'Mar', 'Apr', 'May', 'Jun', 'Jul', 'Aug', 'Sep', 'Oct', 'Nov', 'Dec'] as const;
const pad = (n: number) => String(n).padStart(2, '0');

function toDate(v: string | number | Date | null | undefined): Date | null {
  if (v === null || v === undefined || v === '') return null;
  const d = v instanceof Date ? v : new Date(v);
  return Number.isNaN(d.getTime()) ? null : d;
}

/** "3 Dec 2026" (local date; `utc` for the server's texts); "–" when there is no valid date. */
export function formatDate(v: string | number | Date | null | undefined, opts: { utc?: boolean } = {}): string {
  const d = toDate(v);
  if (!d) return '–';
  return opts.utc ? `${d.getUTCDate()} ${MONTHS[d.getUTCMonth()]} ${d.getUTCFullYear()}` : `${d.getDate()} ${MONTHS[d.getMonth()]} ${d.getFullYear()}`;
}

/** "3 Dec 2026, 14:05" (local time; `utc` adds " UTC" and uses it); "–" when there is no valid date. */
export function formatDateTime(v: string | number | Date | null | undefined, opts: { utc?: boolean } = {}): string {
  const d = toDate(v);
  if (!d) return '–';
  const time = opts.utc ? `${pad(d.getUTCHours())}:${pad(d.getUTCMinutes())} UTC` : `${pad(d.getHours())}:${pad(d.getMinutes())}`;
  return `${formatDate(d, opts)}, ${time}`;
}
