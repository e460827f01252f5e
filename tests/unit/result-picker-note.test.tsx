import { curvesOnlyNote } from '@/components/results/result-picker';

test('builders that take curves say how many two-parameter results the picker leaves out', () => {
  const note = curvesOnlyNote('an envelope takes curves');
  expect(note(0)).toBeNull();
  expect(note(1)).toBe('1 two-parameter result is not shown: an envelope takes curves.');
  expect(note(3)).toBe('3 two-parameter results are not shown: an envelope takes curves.');
});
