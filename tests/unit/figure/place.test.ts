import { annotationPlace } from '@/shared/figure/place';
import { buildScene, resolveFigureTheme } from '@/shared/figure';
import { dijet, spec, stubMeasure } from './fixtures';

/** Placing an annotation on the drawn figure: the inverse of where the scene builder draws it. */
describe('annotationPlace', () => {
  const plot = { x: 40, y: 10, width: 200, height: 100 };
  test.each([
    [40, 10, { x: 0, y: 1 }],
    [240, 110, { x: 1, y: 0 }],
    [140, 60, { x: 0.5, y: 0.5 }],
    [90, 35, { x: 0.25, y: 0.75 }],
    // Outside the plot: clamped to its edges.
    [0, 500, { x: 0, y: 0 }],
    [1000, -50, { x: 1, y: 1 }],
    // Rounded to the spec's 0.001.
    [40 + 200 / 3, 10, { x: 0.333, y: 1 }],
  ])('(%d, %d) pt → %o', (x, y, want) => {
    expect(annotationPlace(plot, x, y)).toEqual(want);
  });

  test('an annotation placed where the scene builder drew one goes back to the same spec position', () => {
    const s = spec({ annotations: [{ text: 'Preliminary', x: 0.3, y: 0.7 }], legend: { position: 'none', columns: 1 } });
    const scene = buildScene(s, [dijet], resolveFigureTheme(s.theme), stubMeasure);
    const drawn = scene.items.find((i) => i.role === 'annotation');
    if (!drawn || drawn.kind !== 'text') throw new Error('no annotation drawn');
    const ascent = stubMeasure(drawn.label, drawn.size, drawn.font).ascent;
    expect(annotationPlace(scene.plot, drawn.x, drawn.y - ascent)).toEqual({ x: 0.3, y: 0.7 });
  });
});
