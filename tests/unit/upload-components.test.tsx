import { render, screen } from '@testing-library/react-native';
import { ProblemList } from '@/components/upload/problem-list';

test('a problem list cut short says how many problems there are in all, with thousands separators', () => {
  const problems = Array.from({ length: 100 }, (_, i) => ({ row: i + 2, column: 'obs', reason: '"x" is not a number' }));
  render(<ProblemList problems={problems} total={1_250_001} />);
  expect(screen.getByText('1,250,001 problems to fix')).toBeTruthy();
  expect(screen.getAllByRole('listitem')).toHaveLength(50);
  expect(screen.getByText('…and 1,249,951 more.')).toBeTruthy();
});
