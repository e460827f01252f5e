import { safeFileName, slugify } from '@/shared/slug';

describe('slugify', () => {
  test('lowercase a–z0–9 words joined by single hyphens, accents dropped, no hyphen at the ends', () => {
    expect(slugify('Lanternfish Dijet Resonances')).toBe('lanternfish-dijet-resonances');
    expect(slugify('  Über  Z′ → jj (2031)! ')).toBe('uber-z-jj-2031');
    expect(slugify('<script>alert(1)</script> search "quotes"')).toBe('script-alert-1-script-search-quotes');
    expect(slugify('snake_case and-dashes --- here')).toBe('snake-case-and-dashes-here');
  });

  test('nothing left gives the fallback', () => {
    expect(slugify('σ × ∞')).toBe('item');
    expect(slugify('', { fallback: 'group' })).toBe('group');
  });

  test('cut at max characters (no trailing hyphen), or at a word boundary with wholeWords', () => {
    expect(slugify('abcd efgh ijkl', { max: 5 })).toBe('abcd');
    expect(slugify('abcd efgh ijkl', { max: 11 })).toBe('abcd-efgh-i');
    expect(slugify('abcd efgh ijkl', { max: 11, wholeWords: true })).toBe('abcd-efgh');
    expect(slugify('abcdefghijkl', { max: 5, wholeWords: true, fallback: 'x' })).toBe('x');
    expect(slugify('x'.repeat(200)).length).toBe(80);
  });

  test('a slug is its own slug', () => {
    for (const s of ['vprime-dijet-18tev-lf7q2', 'a-b-c', 'result']) expect(slugify(s)).toBe(s);
  });
});

describe('safeFileName', () => {
  test('slug, version, extension', () => {
    expect(safeFileName('Limits on the V′ benchmark', 'pdf', { version: 3 })).toBe('limits-on-the-v-benchmark-v3.pdf');
    expect(safeFileName('scan-1a2b3c4d-inputs', 'json')).toBe('scan-1a2b3c4d-inputs.json');
    expect(safeFileName('$\\sigma$', 'svg', { version: 1, fallback: 'figure' })).toBe('sigma-v1.svg');
    expect(safeFileName('∞', 'svg', { version: 1, fallback: 'figure' })).toBe('figure-v1.svg');
  });

  test('nothing of the title can break out of a quoted Content-Disposition name or a path', () => {
    const name = safeFileName('a"b\\c/../d\r\nSet-Cookie: x=1; é', 'csv', { version: 2 });
    expect(name).toMatch(/^[a-z0-9-]+-v2\.csv$/);
    expect(safeFileName('x', '../"exe')).toBe('x.exe');
  });
});
