import { possessive } from '@/shared/words';

test('possessives of group names: a trailing s takes the apostrophe alone (common practice of English style guides)', () => {
  expect(possessive('Lanternfish Dijet Resonances')).toBe('Lanternfish Dijet Resonances’');
  expect(possessive('Heron Group')).toBe('Heron Group’s');
  expect(possessive('  Outreach Office ')).toBe('Outreach Office’s');
  expect(possessive('Team 390')).toBe('Team 390’s');
});
