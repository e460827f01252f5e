/**
 * Citations of a result version or a figure version: a BibTeX entry and a CSL-JSON item, both with
 * the permanent link and the version. Pure; the result and figure pages show them in a "Cite" panel.
 *
 * BibTeX follows the format of BibTeX itself (Patashnik, "BibTeXing", 1988, the btxdoc
 * documentation of BibTeX 0.99): an entry `@misc{key, field = {value}, …}`; values in braces,
 * whose braces must balance; the author field a corporate name is kept whole by an extra pair of
 * braces (`{{Group name}}`, so it is not split into first and last names); the LaTeX special
 * characters `# $ % & _ { } ~ ^ \` escaped in text fields (`\#`, `\textbackslash{}`, …; braces as
 * `\textbraceleft{}`/`\textbraceright{}`, since BibTeX counts a brace even after a backslash). The url
 * field is written verbatim for the url/hyperref packages (`%` and `#` escaped; spaces, braces and `\`
 * percent-encoded).
 * `@misc` is the standard entry type every style knows; `version` and `url` are read by biblatex
 * and natbib-era styles that have them and ignored by those that do not; `howpublished` carries
 * the link for the classic styles.
 *
 * CSL-JSON follows the Citation Style Language 1.0.2 schema (citationstyles.org, csl-data.json):
 * `type: "dataset"`, `title`, `author: [{ literal }]`, `issued: { "date-parts": [[y, m, d]] }`,
 * `version`, `URL`, `publisher`, `accessed`.
 */

export type CiteSource = {
  /** What is cited: a limit result's version, or a figure's version. */
  kind: 'result' | 'figure';
  title: string;
  /** The group that published it (a corporate author). */
  groupName: string;
  version: number;
  /** The permanent link of this version. */
  url: string;
  /** When this version was published (results) or saved (figures), ISO 8601. */
  date: string;
  /** A stable identifier for the key (the result's slug, or the figure's id). */
  id: string;
  /** Free text shown as `note` (e.g. the reference the group gave). */
  note?: string;
  /** The day the citation was made (CSL `accessed`), ISO 8601; left out when absent. */
  accessed?: string;
};

const TEXT_ESCAPES: Record<string, string> = {
  '\\': '\\textbackslash{}',
  // BibTeX counts every brace, escaped or not, so a lone one is written as a command.
  '{': '\\textbraceleft{}',
  '}': '\\textbraceright{}',
  '#': '\\#',
  $: '\\$',
  '%': '\\%',
  '&': '\\&',
  _: '\\_',
  '~': '\\textasciitilde{}',
  '^': '\\textasciicircum{}',
};

/** Text for a braced BibTeX field: LaTeX specials escaped, control characters and line breaks as spaces. */
export function bibtexText(text: string): string {
  return text
    .replace(/\p{Cc}+/gu, ' ')
    .replace(/[\\{}#$%&_~^]/gu, (c) => TEXT_ESCAPES[c]!)
    .replace(/\s+/gu, ' ')
    .trim();
}

/** A URL for the `url` field: verbatim, with the characters that would break the entry escaped. */
export function bibtexUrl(url: string): string {
  // Braces and backslashes are percent-encoded (a permanent link never holds them; BibTeX would count the braces).
  return url
    .replace(/[\s]/gu, '%20')
    .replace(/[\\{}]/gu, (c) => `%${c.charCodeAt(0).toString(16).toUpperCase()}`)
    .replace(/[%#]/gu, (c) => `\\${c}`);
}

/** The entry key: ASCII letters, digits and `-_:.` only (BibTeX keys may not hold spaces, commas or braces). */
export function bibtexKey(src: Pick<CiteSource, 'kind' | 'id' | 'version' | 'date'>): string {
  const id = src.id.normalize('NFD').replace(/[^A-Za-z0-9_:.-]+/gu, '-').replace(/^-+|-+$/gu, '').slice(0, 60) || src.kind;
  const year = yearOf(src.date);
  return `bandwright:${id}:v${src.version}${year ? `:${year}` : ''}`;
}

function yearOf(iso: string): number | null {
  const d = new Date(iso);
  return Number.isNaN(d.getTime()) ? null : d.getUTCFullYear();
}

const MONTHS = ['jan', 'feb', 'mar', 'apr', 'may', 'jun', 'jul', 'aug', 'sep', 'oct', 'nov', 'dec'] as const;

/** The BibTeX `@misc` entry of a result or figure version. */
export function toBibtex(src: CiteSource): string {
  const d = new Date(src.date);
  const valid = !Number.isNaN(d.getTime());
  const what = src.kind === 'result' ? 'Limit result' : 'Figure';
  const fields: [string, string][] = [
    ['author', `{${bibtexText(src.groupName)}}`],
    ['title', `{${bibtexText(src.title)}}`],
    ['howpublished', `\\url{${bibtexUrl(src.url)}}`],
    ['year', valid ? String(d.getUTCFullYear()) : ''],
    ['month', valid ? MONTHS[d.getUTCMonth()]! : ''],
    ['version', String(src.version)],
    ['url', bibtexUrl(src.url)],
    ['note', bibtexText([`${what}, version ${src.version}, Bandwright`, src.note?.trim() ? src.note : ''].filter(Boolean).join('. '))],
  ];
  const body = fields
    .filter(([, v]) => v !== '')
    // `month` takes the standard macro (jan, feb, …) unbraced, as the styles expect.
    .map(([k, v]) => (k === 'month' ? `  ${k} = ${v}` : `  ${k} = {${v}}`))
    .join(',\n');
  return `@misc{${bibtexKey(src)},\n${body}\n}\n`;
}

export type CslItem = {
  id: string;
  type: 'dataset';
  title: string;
  author: { literal: string }[];
  issued?: { 'date-parts': [[number, number, number]] };
  accessed?: { 'date-parts': [[number, number, number]] };
  version: string;
  URL: string;
  publisher: string;
  genre: string;
  note?: string;
};

function dateParts(iso: string | undefined): { 'date-parts': [[number, number, number]] } | undefined {
  if (!iso) return undefined;
  const d = new Date(iso);
  if (Number.isNaN(d.getTime())) return undefined;
  return { 'date-parts': [[d.getUTCFullYear(), d.getUTCMonth() + 1, d.getUTCDate()]] };
}

/** The CSL-JSON item of a result or figure version (JSON escaping is the serializer's). */
export function toCslJson(src: CiteSource): CslItem {
  const issued = dateParts(src.date);
  const accessed = dateParts(src.accessed);
  return {
    id: bibtexKey(src),
    type: 'dataset',
    title: src.title,
    author: [{ literal: src.groupName }],
    ...(issued ? { issued } : {}),
    ...(accessed ? { accessed } : {}),
    version: String(src.version),
    URL: src.url,
    publisher: 'Bandwright',
    genre: src.kind === 'result' ? 'Limit result' : 'Figure',
    ...(src.note?.trim() ? { note: src.note.trim() } : {}),
  };
}

/** CSL-JSON as a file holds it: an array of items, indented. */
export function cslJsonText(src: CiteSource): string {
  return `${JSON.stringify([toCslJson(src)], null, 2)}\n`;
}
