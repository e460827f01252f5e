import { captionDraft, figureCsv, type FigureLayerData } from '@/shared/figure';
import { dijet, dilepton, hiddenLayer, ID, spec } from './fixtures';

const rows = (csv: string) => csv.trimEnd().split('\r\n').slice(1).map((r) => r.split(','));

describe('figure CSV', () => {
  test('every plotted curve, one row per point, with units', () => {
    const csv = figureCsv(spec(), [dijet, dilepton]);
    expect(csv.split('\r\n')[0]).toBe('layer,quantity,x,value,x_unit,value_unit');
    const r = rows(csv);
    const count = (layer: string, q: string) => r.filter((x) => x[0] === layer && x[1] === q).length;
    expect(count('Lanternfish dijet', 'observed')).toBe(9);
    expect(count('Lanternfish dijet', 'expected_plus_2sigma')).toBe(9);
    expect(count('Lanternfish dijet', 'theory')).toBe(7);
    // The second layer hides its theory and carries no bands.
    expect(count('Lanternfish dilepton', 'theory')).toBe(0);
    expect(count('Lanternfish dilepton', 'expected_minus_1sigma')).toBe(0);
    expect(r[0]).toEqual(['Lanternfish dijet', 'observed', '1', String(dijet.available && dijet.curve.observed![0]), 'TeV', 'fb']);
  });
  test('outreach exports only the band it draws; hidden layers leave no trace; formula-like names are defused', () => {
    const s = spec({ theme: 'outreach', layers: [{ resultId: ID[0], version: 3, label: '=HYPERLINK("x")' }, { resultId: ID[2], version: 2, label: 'Secret channel' }] });
    const csv = figureCsv(s, [dijet, hiddenLayer]);
    const r = rows(csv);
    expect(r.some((x) => x[1]!.includes('2sigma'))).toBe(false);
    expect(r.some((x) => x[1] === 'expected_plus_1sigma')).toBe(true);
    expect(csv).not.toContain('Secret');
    expect(csv).not.toContain(ID[2]);
    expect(csv.split('\r\n')[1]!.startsWith(`"'=HYPERLINK(""x"")"`)).toBe(true);
  });
});

describe('caption draft', () => {
  test('names the results with their references and versions, in plain text', () => {
    const c = captionDraft(spec(), [dijet, dilepton]);
    expect(c).toContain('Observed (solid) and expected (dashed) 95% CL upper limits on the cross-section times branching ratio σ×B (fb)');
    expect(c).toContain('Lanternfish dijet (LANTERNFISH-EXO-2031-04, version 3) and Lanternfish dilepton (LANTERNFISH-EXO-2032-01, version 1)');
    expect(c).toContain('±1σ and ±2σ bands');
    expect(c).toContain('√s = 18 TeV, 140 fb⁻¹');
    expect(c).not.toMatch(/[$\\{}]/);
  });
  test('counts results the viewer may not see without naming them; outreach in plain words', () => {
    const s = spec({ theme: 'outreach', layers: [{ resultId: ID[0], version: 3 }, { resultId: ID[2], version: 2, label: 'Secret channel' }] });
    const c = captionDraft(s, [dijet, hiddenLayer as FigureLayerData]);
    expect(c).toContain('One further result is not shown.');
    expect(c).not.toContain('Secret');
    expect(c).not.toMatch(/CL|σ|μ/);
    expect(captionDraft(spec({ layers: [] }), [])).toBe('No results are shown in this figure.');
  });
});
