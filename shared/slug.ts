/**
 * Slugs and file names: the one way a title or name becomes part of a URL (group and result slugs)
 * or of a downloaded file's name (figure renders and exports, result downloads, the README's demo
 * figures). Only a–z, 0–9 and single hyphens come out, so a name is safe in a URL path, in a
 * `Content-Disposition` header and on every file system.
 */

export type SlugOptions = {
  /** What to return when nothing of the text is left (a title of only symbols). Default "item". */
  fallback?: string;
  /** Longest slug, in characters. Default 80. */
  max?: number;
  /** Cut at a word boundary (whole words up to `max`) instead of in the middle of a word. */
  wholeWords?: boolean;
};

/**
 * Lowercase a–z0–9 words joined by single hyphens, accents dropped ("Über Z′ → jj" →
 * "uber-z-jj"), at most `max` characters, no hyphen at either end.
 */
export function slugify(text: string, opts: SlugOptions = {}): string {
  const { fallback = 'item', max = 80, wholeWords = false } = opts;
  const plain = text
    .normalize('NFKD')
    .replace(/[\u0300-\u036f]/g, '')
    .toLowerCase()
    .replace(/[^a-z0-9]+/g, '-');
  if (!wholeWords) return plain.slice(0, max).replace(/^-+|-+$/g, '') || fallback;
  let out = '';
  for (const w of plain.split('-').filter(Boolean)) {
    const next = out ? `${out}-${w}` : w;
    if (next.length > max) break;
    out = next;
  }
  return out || fallback;
}

/**
 * A download's file name: the slug of `name` (at most 80 characters, `fallback` when nothing is
 * left), then `-v<version>` when a version is given, then the extension: "dijet-limits-v3.pdf".
 */
export function safeFileName(name: string, ext: string, opts: { version?: number; fallback?: string } = {}): string {
  const base = slugify(name, { fallback: opts.fallback ?? 'download', max: 80 });
  const version = opts.version === undefined ? '' : `-v${opts.version}`;
  return `${base}${version}.${slugify(ext, { fallback: 'bin', max: 10 })}`;
}
