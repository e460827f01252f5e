/**
 * Golden SVGs: one invented three-layer figure (two visible layers, one the viewer may not see)
 * per theme, rendered with the stub typesetter and compared with the committed file.
 * A missing golden file is a failure, never written silently (a test that writes what it then
 * compares with proves nothing). Write them after an intended change with
 * `UPDATE_GOLDEN=1 npm test -- tests/unit/figure/golden.test.ts` and look at the files before
 * committing them.
 */
import { existsSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { buildScene, collectLabels, resolveFigureTheme, sceneToSvg } from '@/shared/figure';
import { FIGURE_THEMES, type FigureTheme } from '@/shared/schemas/figures';
import { dijet, dilepton, hiddenLayer, ID, spec, stubGlyphs, stubMeasure } from './fixtures';

const SIZE: Record<FigureTheme, 'one-column' | 'slide' | 'web'> = { publication: 'one-column', slides: 'slide', outreach: 'web' };

function goldenSvg(theme: FigureTheme): string {
  const s = spec({
    theme,
    size: { preset: SIZE[theme] },
    layers: [
      { resultId: ID[0], version: 3, show: { crossings: true } },
      { resultId: ID[1], version: 1, show: { theory: false } },
      { resultId: ID[2], version: 2 },
    ],
    annotations: [{ text: 'Lanternfish', x: 0.04, y: 0.08 }],
  });
  const layers = [dijet, dilepton, hiddenLayer];
  const t = resolveFigureTheme(theme);
  return sceneToSvg(buildScene(s, layers, t, stubMeasure), stubGlyphs(collectLabels(s, layers, t)), { title: s.title });
}

describe('golden SVGs', () => {
  test.each(FIGURE_THEMES)('%s matches its committed golden file', (theme) => {
    const file = join(__dirname, 'golden', `${theme}.svg`);
    const svg = goldenSvg(theme);
    if (process.env.UPDATE_GOLDEN === '1') writeFileSync(file, svg);
    if (!existsSync(file)) throw new Error(`The golden file ${theme}.svg is missing: write it with UPDATE_GOLDEN=1 (see the top of this file) and look at it before committing it.`);
    expect(svg).toBe(readFileSync(file, 'utf8'));
  });
});
