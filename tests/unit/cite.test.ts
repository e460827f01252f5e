import { bibtexKey, bibtexText, bibtexUrl, cslJsonText, toBibtex, toCslJson, type CiteSource } from '@/shared/cite';

const base: CiteSource = {
  kind: 'result',
  title: 'Lanternfish dijet resonances',
  groupName: 'Lanternfish Dijet Resonances',
  version: 3,
  url: 'http://127.0.0.1:8080/r/lanternfish-dijet-ab12c/v3',
  date: '2031-04-05T10:00:00.000Z',
  id: 'lanternfish-dijet-ab12c',
};

/** BibTeX counts braces without regard to backslashes: every field value must balance. */
function bracesBalance(entry: string): boolean {
  let depth = 0;
  for (const c of entry) {
    if (c === '{') depth++;
    if (c === '}') depth--;
    if (depth < 0) return false;
  }
  return depth === 0;
}

describe('BibTeX', () => {
  test('a @misc entry with the group as one corporate author, year, month macro, version, url and note', () => {
    expect(toBibtex(base)).toBe(
      [
        '@misc{bandwright:lanternfish-dijet-ab12c:v3:2031,',
        '  author = {{Lanternfish Dijet Resonances}},',
        '  title = {{Lanternfish dijet resonances}},',
        '  howpublished = {\\url{http://127.0.0.1:8080/r/lanternfish-dijet-ab12c/v3}},',
        '  year = {2031},',
        '  month = apr,',
        '  version = {3},',
        '  url = {http://127.0.0.1:8080/r/lanternfish-dijet-ab12c/v3},',
        '  note = {Limit result, version 3, Bandwright}',
        '}',
        '',
      ].join('\n'),
    );
  });

  test.each([['{'], ['}'], ['}}{'], ['%'], ['&'], ['\\'], ['#$_~^'], ['}, title = {evil'], ['\\end{document}'], ['line\nbreak\u0000nul']])(
    'hostile title %j is escaped and the entry stays balanced',
    (title) => {
      const entry = toBibtex({ ...base, title, groupName: title, note: title });
      expect(bracesBalance(entry)).toBe(true);
      // Every special character in the value is a command or escaped, never bare.
      const value = bibtexText(title);
      expect(value.replace(/\\(textbackslash|textbraceleft|textbraceright|textasciitilde|textasciicircum)\{\}|\\[#$%&_]/g, '')).not.toMatch(/[\\{}#$%&_~^]/);
      expect(value).not.toMatch(/\p{Cc}/u);
      // The entry has exactly the fields written (no field smuggled in through the title).
      expect(entry.match(/^ {2}[a-z]+ = /gm)).toEqual(['  author = ', '  title = ', '  howpublished = ', '  year = ', '  month = ', '  version = ', '  url = ', '  note = ']);
    },
  );

  test('escapes', () => {
    expect(bibtexText('50% of A&B {x} \\ y_z')).toBe('50\\% of A\\&B \\textbraceleft{}x\\textbraceright{} \\textbackslash{} y\\_z');
    expect(bibtexUrl('http://h/r/a b{c}%#\\')).toBe('http://h/r/a\\%20b\\%7Bc\\%7D\\%\\#\\%5C');
    expect(bibtexKey({ kind: 'figure', id: '{bad key}, x', version: 1, date: 'not a date' })).toBe('bandwright:bad-key-x:v1');
  });

  test('the reference the group gave goes into the note', () => {
    expect(toBibtex({ ...base, note: 'HR-2031-07' })).toContain('  note = {Limit result, version 3, Bandwright. HR-2031-07}');
  });
});

describe('CSL-JSON', () => {
  test('a dataset with a literal author, issued date parts, version and URL', () => {
    expect(toCslJson({ ...base, kind: 'figure', accessed: '2031-05-01T00:00:00Z' })).toEqual({
      id: 'bandwright:lanternfish-dijet-ab12c:v3:2031',
      type: 'dataset',
      title: 'Lanternfish dijet resonances',
      author: [{ literal: 'Lanternfish Dijet Resonances' }],
      issued: { 'date-parts': [[2031, 4, 5]] },
      accessed: { 'date-parts': [[2031, 5, 1]] },
      version: '3',
      URL: 'http://127.0.0.1:8080/r/lanternfish-dijet-ab12c/v3',
      publisher: 'Bandwright',
      genre: 'Figure',
    });
  });

  test('hostile text survives the round trip through JSON unchanged', () => {
    const title = '"}]{\\%&</script>';
    const parsed = JSON.parse(cslJsonText({ ...base, title })) as { title: string }[];
    expect(parsed[0]!.title).toBe(title);
  });
});
