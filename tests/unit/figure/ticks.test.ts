import { axisDomain, formatLinear, linearTicks, logTicks, MAX_DECADE_TICKS, thinLabels } from '@/shared/figure/ticks';
import { buildScene, collectLabels, resolveFigureTheme, type Measure } from '@/shared/figure';
import { dijet, spec, stubMeasure } from './fixtures';
import { texts } from './helpers';

const axis = (over: Partial<{ scale: 'linear' | 'log'; min: number | null; max: number | null }> = {}) => ({ scale: 'linear' as const, min: null, max: null, label: '', ...over });

describe('log axes', () => {
  test('decades carry the labels, written as powers of ten beyond three decades; minor ticks at 2–9 × 10^n', () => {
    const t = logTicks([0.01, 1000], 200);
    expect(t.major.map((m) => m.value)).toEqual([0.01, 0.1, 1, 10, 100, 1000]);
    expect(t.major.map((m) => m.label)).toEqual(['$10^{-2}$', '$10^{-1}$', '$10^{0}$', '$10^{1}$', '$10^{2}$', '$10^{3}$']);
    expect(t.minor).toHaveLength(5 * 8);
    expect(t.minor.slice(0, 8)).toEqual([0.02, 0.03, 0.04, 0.05, 0.06, 0.07, 0.08, 0.09]);
    expect(t.minor.some((v) => t.major.some((m) => m.value === v))).toBe(false);
  });
  test('up to three decades within 0.001…10000 are written out as plain numbers', () => {
    expect(logTicks([0.1, 100], 200).major.map((m) => m.label)).toEqual(['0.1', '1', '10', '100']);
    expect(logTicks([1, 1000], 200).major.map((m) => m.label)).toEqual(['1', '10', '100', '1000']);
    // One more decade and the whole axis switches, never mixing the two forms.
    expect(logTicks([1, 10000], 200).major.map((m) => m.label)).toEqual(['$10^{0}$', '$10^{1}$', '$10^{2}$', '$10^{3}$', '$10^{4}$']);
  });
  test('fewer than two decades inside: the 2× and 5× values are labelled too', () => {
    const t = logTicks([2, 50], 200);
    expect(t.major.map((m) => m.label)).toEqual(['2', '5', '10', '20', '50']);
    expect(t.minor).toEqual([3, 4, 6, 7, 8, 9, 30, 40]);
  });
  test('minor ticks are left out when a decade is too short to hold them', () => {
    expect(logTicks([1e-8, 1e8], 100).minor).toEqual([]);
    expect(logTicks([1e-8, 1e8], 100).major).toHaveLength(17);
  });
  test('an automatic log range pads the data, reaches where asked and ends on 1, 2 or 5 × 10^n', () => {
    expect(axisDomain(axis({ scale: 'log' }), [0.3, 40, -1, 0, NaN], { pad: 0.05, fromZero: true })).toEqual([0.2, 100]);
    // Room for a legend: reach 10^2.9 ≈ 794 → 1000.
    expect(axisDomain(axis({ scale: 'log' }), [0.3, 40], { pad: 0.05, fromZero: true, reach: { high: 2.9 } })).toEqual([0.2, 1000]);
    expect(axisDomain(axis({ scale: 'log' }), [0.3, 40], { pad: 0.05, fromZero: true, reach: { low: -2.5 } })).toEqual([0.002, 100]);
    expect(axisDomain(axis({ scale: 'log', min: 1e-3, max: 10 }), [0.3, 40], { pad: 0.05, fromZero: true, reach: { high: 5 } })).toEqual([1e-3, 10]);
    // A fixed minimum that a log axis cannot use is ignored, not drawn as NaN.
    const [a] = axisDomain(axis({ scale: 'log', min: 0 }), [0.3, 40], { pad: 0, fromZero: false });
    expect(a).toBeGreaterThan(0);
  });
});

describe('linear axes', () => {
  test('round steps, labels with the decimals the step needs, minor ticks subdividing each step', () => {
    const t = linearTicks([0, 5], 5);
    expect(t.major.map((m) => m.label)).toEqual(['0', '1', '2', '3', '4', '5']);
    expect(t.minor.slice(0, 4)).toEqual([0.2, 0.4, 0.6, 0.8]);
    const half = linearTicks([1, 3], 4);
    expect(half.major.map((m) => m.label)).toEqual(['1.0', '1.5', '2.0', '2.5', '3.0']);
    expect(linearTicks([0, 1], 5).major.map((m) => m.label)).toEqual(['0.0', '0.2', '0.4', '0.6', '0.8', '1.0']);
    expect(linearTicks([0, 1], 5).minor.slice(0, 3)).toEqual([0.05, 0.1, 0.15]);
  });
  test('negative numbers use the minus sign; zero is never "-0"', () => {
    expect(formatLinear(-1.5, 0.5)).toBe('\u22121.5');
    expect(formatLinear(-0, 1)).toBe('0');
    expect(formatLinear(-1e-17, 0.5)).toBe('0.0');
  });
  test('automatic ranges: fixed ends obeyed, a y axis of positive limits starts at zero', () => {
    expect(axisDomain(axis(), [2, 8], { pad: 0.05, fromZero: true })).toEqual([0, 9]); // 8 + 5 % of 8, up to a whole step
    expect(axisDomain(axis(), [2, 8], { pad: 0.05, fromZero: true, reach: { high: 11.5 } })).toEqual([0, 12]);
    expect(axisDomain(axis({ min: 1, max: 9 }), [2, 8], { pad: 0.05, fromZero: true })).toEqual([1, 9]);
    expect(axisDomain(axis(), [], { pad: 0, fromZero: false })).toEqual([0, 1]);
    const [a, b] = axisDomain(axis(), [5, 5], { pad: 0, fromZero: false });
    expect(b).toBeGreaterThan(a);
  });
});

describe('tick labels never overlap', () => {
  test('thinning keeps every k-th label at round values', () => {
    const spans = [0, 1, 2, 3, 4, 5, 6].map((v, i) => ({ index: i, ordinal: v, from: v * 10 - 8, to: v * 10 + 8 }));
    const kept = thinLabels(spans, 2);
    expect(kept).toEqual([0, 2, 4, 6]);
    expect(thinLabels(spans.map((s) => ({ ...s, from: s.from + 5, to: s.to - 5 })), 2)).toEqual([0, 1, 2, 3, 4, 5, 6]);
  });
  test('in a scene with very long tick labels the drawn ones keep apart', () => {
    const s = spec({ x: { scale: 'linear', min: 0, max: 10, label: '' }, layers: [{ resultId: dijet.resultId, version: 3 }] });
    const theme = resolveFigureTheme('publication');
    // Tick labels measured ten times wider than the stub would.
    const wide: Measure = (label, size, font) => {
      const m = stubMeasure(label, size, font);
      return /^[\d.]+$/.test(label) ? { ...m, width: m.width * 10 } : m;
    };
    const scene = buildScene(s, [dijet], theme, wide);
    const xs = texts(scene, 'tick').filter((t) => t.anchor === 'middle');
    expect(xs.length).toBeGreaterThanOrEqual(2);
    expect(xs.length).toBeLessThan(collectLabels(s, [dijet], theme).filter((l) => /^[\d.]+$/.test(l.label)).length);
    for (let i = 1; i < xs.length; i++) {
      const prev = xs[i - 1]!;
      const cur = xs[i]!;
      const w = (t: typeof cur) => wide(t.label, t.size, t.font).width;
      expect(cur.x - w(cur) / 2).toBeGreaterThanOrEqual(prev.x + w(prev) / 2);
    }
  });
  test('labels of the two axes never collide at the origin corner', () => {
    // y starts at a labelled decade and x at a labelled tick: both labels sit at the corner.
    const s = spec({ x: { scale: 'linear', min: 1, max: 5, label: '' }, y: { scale: 'log', min: 0.1, max: 100, label: '' }, layers: [{ resultId: dijet.resultId, version: 3 }] });
    const wide: Measure = (label, size, font) => ({ ...stubMeasure(label, size, font), width: 4 * size });
    const scene = buildScene(s, [dijet], resolveFigureTheme('publication'), wide);
    const boxes = texts(scene, 'tick').map((t) => {
      const m = wide(t.label, t.size, t.font);
      const x0 = t.anchor === 'middle' ? t.x - m.width / 2 : t.anchor === 'end' ? t.x - m.width : t.x;
      return { label: t.label, x0, x1: x0 + m.width, y0: t.y - m.ascent, y1: t.y + m.descent };
    });
    expect(boxes.map((b) => b.label)).toContain('1');
    for (const a of boxes) for (const b of boxes) if (a !== b) expect({ a: a.label, b: b.label, clash: a.x0 < b.x1 && b.x0 < a.x1 && a.y0 < b.y1 && b.y0 < a.y1 }).toEqual({ a: a.label, b: b.label, clash: false });
  });
});

describe('enormous and degenerate ranges (found by the render fuzz test: the server ran out of memory)', () => {
  test('a log range that is not positive and finite has no ticks instead of an endless loop', () => {
    expect(logTicks([0, 10], 100)).toEqual({ major: [], minor: [], plainDecades: false });
    expect(logTicks([1, Infinity], 100).major).toEqual([]);
  });
  test('six hundred decades carry at most MAX_DECADE_TICKS labels, on round decades', () => {
    const t = logTicks([1e-300, 1e300], 300);
    expect(t.major.length).toBeGreaterThan(10);
    expect(t.major.length).toBeLessThanOrEqual(MAX_DECADE_TICKS);
    const step = t.major[1]!.ordinal - t.major[0]!.ordinal;
    expect(t.major.every((m) => m.ordinal % step === 0)).toBe(true);
  });
  test('automatic ends stay finite: log ends within 10^±300 whatever room is asked, linear data near the largest doubles', () => {
    const log = axisDomain({ scale: 'log', min: null, max: null, label: '' }, [1e-200, 1e200], { pad: 0.05, fromZero: false, reach: { low: -500, high: 900 } });
    expect(log).toEqual([1e-300, 1e300]);
    const lin = axisDomain({ scale: 'linear', min: null, max: null, label: '' }, [-1.7e308, 1.7e308], { pad: 0.05, fromZero: false });
    expect(lin.every(Number.isFinite)).toBe(true);
    expect(lin[1]).toBeGreaterThan(lin[0]);
  });
});
