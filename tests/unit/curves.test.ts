import { checkCurve, formatCount, MAX_PROBLEMS, ProblemCollector } from '@/shared/curves/check';
import { CsvFileError, decodeText, detectRoles, parseCsv, tableToCurve, curveToCsv } from '@/shared/curves/csv';

const problemsOf = (fn: () => unknown) => {
  try {
    fn();
  } catch (e) {
    if (e instanceof CsvFileError) return e.problems;
    throw e;
  }
  return [];
};

describe('column auto-detection from header names', () => {
  test('unusual headers map to their roles', () => {
    const headers = ["M_V' [GeV]", 'Obs. limit (fb)', 'Exp -2σ', 'Exp. -1 sigma', 'Expected median', 'exp+1s', 'Exp +2σ', 'Theory xsec', 'theory low', 'theory up'];
    expect(detectRoles(headers)).toEqual({
      x: 0, observed: 1, expectedMinus2: 2, expectedMinus1: 3, expected: 4, expectedPlus1: 5, expectedPlus2: 6, theory: 7, theoryLower: 8, theoryUpper: 9,
    });
  });
  test('band words: down/up and 68/95 also work; unknown columns stay unmapped', () => {
    expect(detectRoles(['mass', 'observed', 'expected', 'exp_1sigma_down', 'exp_1sigma_up', 'exp_2sigma_down', 'exp_2sigma_up', 'comment'])).toEqual({
      x: 0, observed: 1, expected: 2, expectedMinus1: 3, expectedPlus1: 4, expectedMinus2: 5, expectedPlus2: 6,
    });
  });
  test('theory columns: NLO and hyphenated model names are not band edges; whole-word edges are', () => {
    expect(detectRoles(['mass', 'obs', 'theory xsec (NLO) [fb]', 'theory low', 'theory_up'])).toEqual({ x: 0, observed: 1, theory: 2, theoryLower: 3, theoryUpper: 4 });
    expect(detectRoles(['mass', 'obs', 'sigma_th NLO+NLL'])).toEqual({ x: 0, observed: 1, theory: 2 });
    expect(detectRoles(['mass', 'obs', 'Theory (top-philic)', 'theory -1σ', 'theory +1σ'])).toEqual({ x: 0, observed: 1, theory: 2, theoryLower: 3, theoryUpper: 4 });
  });
  test('short band names exp_m1 / exp_p1 / exp_m2 / exp_p2 are recognised', () => {
    expect(detectRoles(['m', 'obs', 'exp', 'exp_m1', 'exp_p1', 'exp_m2', 'exp_p2'])).toEqual({
      x: 0, observed: 1, expected: 2, expectedMinus1: 3, expectedPlus1: 4, expectedMinus2: 5, expectedPlus2: 6,
    });
  });
  test('without a recognisable parameter header, the first free column is the parameter', () => {
    expect(detectRoles(['point', 'obs'])).toEqual({ observed: 1, x: 0 });
  });
});

describe('parsing and conversion', () => {
  test('semicolon files with decimal commas and tab files give the same curve as comma files', () => {
    const comma = 'mass,obs,exp\n1000,1.5,1.2\n2000,0.8,0.7\n';
    const semi = 'mass;obs;exp\n1000;1,5;1,2\n2000;0,8;0,7\n';
    const tab = 'mass\tobs\texp\n1000\t1.5\t1.2\n2000\t0.8\t0.7\n';
    const curves = [comma, semi, tab].map((t) => {
      const table = parseCsv(t);
      return tableToCurve(table, detectRoles(table.headers)).curve;
    });
    expect(curves[0]).toEqual({ x: [1000, 2000], observed: [1.5, 0.8], expected: { '0': [1.2, 0.7] } });
    expect(curves[1]).toEqual(curves[0]);
    expect(curves[2]).toEqual(curves[0]);
  });

  test('every bad cell is named by file line and column header', () => {
    const text = '# comment line\nmass,obs,exp\n1000,abc,1.2\n2000,-0.5,\n';
    const table = parseCsv(text);
    const problems = problemsOf(() => tableToCurve(table, detectRoles(table.headers)));
    expect(problems).toEqual(
      expect.arrayContaining([
        { row: 3, column: 'obs', reason: '"abc" is not a number' },
        { row: 4, column: 'exp', reason: 'is empty' },
      ]),
    );
  });

  test('negative limits, unsorted and duplicate x, band order are reported with the user column names', () => {
    const text = 'm,obs,exp,m1,p1\n1000,1,1,0.8,1.3\n900,-1,1,0.8,1.3\n900,1,1,1.1,1.3\n';
    const table = parseCsv(text);
    const problems = problemsOf(() => tableToCurve(table, { x: 0, observed: 1, expected: 2, expectedMinus1: 3, expectedPlus1: 4 }));
    expect(problems).toEqual(
      expect.arrayContaining([
        expect.objectContaining({ row: 3, column: 'm', reason: expect.stringContaining('smaller than the row before') }),
        expect.objectContaining({ row: 4, column: 'm', reason: expect.stringContaining('duplicates') }),
        expect.objectContaining({ row: 3, column: 'obs', reason: expect.stringContaining('must be positive') }),
        expect.objectContaining({ row: 4, column: 'm1', reason: expect.stringContaining('−2σ ≤ −1σ ≤ median') }),
      ]),
    );
  });

  test('empty files, header-only files, one-column files and missing mappings are refused', () => {
    expect(problemsOf(() => parseCsv('   \n'))[0]?.reason).toBe('is empty');
    expect(problemsOf(() => parseCsv('mass,obs\n'))[0]?.reason).toMatch(/no data rows/);
    expect(problemsOf(() => parseCsv('mass|obs\n1|2\n'))[0]?.reason).toMatch(/one column only/);
    expect(problemsOf(() => parseCsv('1,2\n3,4\n'))[0]?.reason).toMatch(/name the columns/);
    const table = parseCsv('a,b\n1,2\n3,4\n');
    expect(problemsOf(() => tableToCurve(table, { x: 0 }))[0]?.reason).toMatch(/observed or an expected median/);
  });

  test('a row with the wrong number of cells is named', () => {
    const table = parseCsv('mass,obs\n1000,1\n2000,1,7\n');
    expect(problemsOf(() => tableToCurve(table, { x: 0, observed: 1 }))).toEqual([
      expect.objectContaining({ row: 3, column: 'row', reason: expect.stringContaining('3 cells') }),
    ]);
  });

  test('UTF-8 with BOM and UTF-16 decode; Latin-1 is refused with the fix', () => {
    const utf8bom = new Uint8Array([0xef, 0xbb, 0xbf, ...new TextEncoder().encode('m,σ\n')]);
    expect(decodeText(utf8bom)).toBe('m,σ\n');
    const utf16 = new Uint8Array([0xff, 0xfe, 0x6d, 0x00, 0x2c, 0x00, 0x6f, 0x00]);
    expect(decodeText(utf16)).toBe('m,o');
    const latin1 = new Uint8Array([0x6d, 0x2c, 0xb5, 0x0a]); // "m,µ" in Latin-1
    expect(problemsOf(() => decodeText(latin1))[0]?.reason).toMatch(/not UTF-8/);
  });

  test('curve → CSV → curve round-trips', () => {
    const curve = { x: [1, 2, 3], observed: [3, 2, 1], expected: { '0': [2.5, 1.5, 0.9], '-1': [2, 1, 0.7], '1': [3, 2, 1.2] } };
    const theory = { x: [1, 2, 3], central: [5, 2, 0.5] };
    const text = curveToCsv(curve, theory, { x: 'mass' });
    const table = parseCsv(text);
    expect(tableToCurve(table, detectRoles(table.headers))).toEqual({ curve, theory });
  });
});

test('checkCurve asks for both edges of a band and for the median', () => {
  const p = checkCurve({ x: [1, 2], expected: { '-1': [1, 1] } });
  expect(p.map((q) => q.reason)).toEqual(expect.arrayContaining([expect.stringContaining('needs both edges'), expect.stringContaining('is needed when')]));
});

describe('bounded problem lists', () => {
  test('a table with many bad cells keeps the first 100 problems and counts every one', () => {
    const rows = 25_000;
    const table = parseCsv(`mass,obs,exp\n${Array.from({ length: rows }, (_, i) => `${i + 1},x,`).join('\n')}\n`);
    let error: CsvFileError | undefined;
    try {
      tableToCurve(table, detectRoles(table.headers));
    } catch (e) {
      error = e as CsvFileError;
    }
    expect(error).toBeInstanceOf(CsvFileError);
    expect(error!.problems).toHaveLength(MAX_PROBLEMS);
    // Two bad cells per row, and one more for a table longer than a curve may be.
    expect(error!.total).toBe(2 * rows + 1);
    // The whole-file problem comes first, then the cells in file order.
    expect(error!.problems[0]).toEqual({ column: 'file', reason: 'has 25,000 data rows; a curve has at most 10,000 points' });
    expect(error!.problems[1]).toEqual({ row: 2, column: 'obs', reason: '"x" is not a number' });
    expect(error!.problems[2]).toEqual({ row: 2, column: 'exp', reason: 'is empty' });
  });

  test('checkCurve counts into a collector beyond what it returns', () => {
    const n = 500;
    const found = new ProblemCollector();
    const problems = checkCurve({ x: Array.from({ length: n }, (_, i) => i), observed: Array.from({ length: n }, () => -1) }, null, undefined, found);
    expect(problems).toHaveLength(MAX_PROBLEMS);
    expect(found.total).toBe(n);
    expect(found.hidden).toBe(n - MAX_PROBLEMS);
  });

  test('counts are written with thousands separators', () => {
    expect(formatCount(1_249_900)).toBe('1,249,900');
    expect(formatCount(999)).toBe('999');
  });

  test('parsing keeps file line numbers past blank and comment lines (row by row)', () => {
    const table = parseCsv('# comment\nmass,obs\n\n1000, 2.5 \n# another\n2000,1.5\n');
    expect(table.headers).toEqual(['mass', 'obs']);
    expect(table.rows).toEqual([['1000', '2.5'], ['2000', '1.5']]);
    expect(table.lines).toEqual([4, 6]);
  });
});
