import { addLayer, edit, moveLayer, redo, removeLayer, startHistory, undo, withTheme } from '@/components/figure/composer-model';
import { figureSpecSchema, type FigureSpec } from '@/shared/schemas/figures';

const A = '00000000-0000-4000-8000-00000000000a';
const B = '00000000-0000-4000-8000-00000000000b';
const C = '00000000-0000-4000-8000-00000000000c';
const base: FigureSpec = figureSpecSchema.parse({ title: 'Fictional overlay', theme: 'publication', size: { preset: 'one-column' }, layers: [] });

test('layers are added once, and the first one carries the bands', () => {
  let s = addLayer(base, A, 2);
  s = addLayer(s, B, 1);
  s = addLayer(s, B, 1);
  expect(s.layers.map((l) => l.resultId)).toEqual([A, B]);
  expect(s.bandsLayer).toBe(0);
  expect(figureSpecSchema.safeParse(s).success).toBe(true);
});

test('the bands follow their layer when layers move or are removed', () => {
  let s = [A, B, C].reduce((acc, id) => addLayer(acc, id, 1), base);
  s = { ...s, bandsLayer: 1 };
  s = moveLayer(s, 1, -1); // B to the top
  expect(s.layers[0]!.resultId).toBe(B);
  expect(s.bandsLayer).toBe(0);
  s = moveLayer(s, 2, -1); // C above A: the bands layer (B) does not move
  expect(s.bandsLayer).toBe(0);
  s = removeLayer(s, 1); // remove C
  expect(s.layers.map((l) => l.resultId)).toEqual([B, A]);
  expect(s.bandsLayer).toBe(0);
  s = removeLayer(s, 0); // remove the bands layer: the bands go to the new first layer
  expect(s.bandsLayer).toBe(0);
  expect(removeLayer(s, 0).bandsLayer).toBeNull();
});

test('undo and redo walk the edits; typing in one field is one step', () => {
  let h = startHistory(base);
  h = edit(h, { ...h.present, title: 'F' }, 'title');
  h = edit(h, { ...h.present, title: 'Fi' }, 'title', 'title');
  h = edit(h, { ...h.present, theme: 'slides' });
  expect(h.present.theme).toBe('slides');
  h = undo(h);
  expect(h.present).toEqual({ ...base, title: 'Fi' });
  h = undo(h);
  expect(h.present).toEqual(base);
  expect(undo(h)).toBe(h);
  h = redo(redo(h));
  expect(h.present.theme).toBe('slides');
});

describe('switching the theme', () => {
  const base = figureSpecSchema.parse({ title: 'T', theme: 'publication', size: { preset: 'one-column' }, layers: [] });
  test('the usual size follows the theme (slide type on a journal column would be unreadable)', () => {
    expect(withTheme(base, 'slides')).toMatchObject({ theme: 'slides', size: { preset: 'slide' } });
    expect(withTheme(withTheme(base, 'slides'), 'outreach')).toMatchObject({ theme: 'outreach', size: { preset: 'web' } });
    expect(withTheme(withTheme(base, 'slides'), 'publication')).toMatchObject({ theme: 'publication', size: { preset: 'one-column' } });
  });
  test('a size someone chose stays', () => {
    const twoCol = { ...base, size: { preset: 'two-column' as const } };
    expect(withTheme(twoCol, 'slides').size).toEqual({ preset: 'two-column' });
    const custom = { ...base, size: { preset: 'custom' as const, widthCm: 12, heightCm: 9 } };
    expect(withTheme(custom, 'outreach').size).toEqual(custom.size);
  });
});
