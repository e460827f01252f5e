import { fireEvent, render, screen } from '@testing-library/react-native';
import { MappingEditor } from '@/components/upload/mapping-editor';
import { PreviewStatus } from '@/components/upload/preview-status';
import { ProblemList } from '@/components/upload/problem-list';
import { parseCsv } from '@/shared/curves/csv';

test('a problem list cut short says how many problems there are in all, with thousands separators', () => {
  const problems = Array.from({ length: 100 }, (_, i) => ({ row: i + 2, column: 'obs', reason: '"x" is not a number' }));
  render(<ProblemList problems={problems} total={1_250_001} />);
  expect(screen.getByText('1,250,001 problems to fix')).toBeTruthy();
  expect(screen.getAllByRole('listitem')).toHaveLength(50);
  expect(screen.getByText('…and 1,249,951 more.')).toBeTruthy();
});

describe('column roles are never moved or dropped silently', () => {
  const table = parseCsv('mass,obs,obs (rerun),exp,note\n1,2,2.1,1.5,a\n2,1,1.1,0.9,b\n');

  test('giving a role to a second column says that it moved from the first', () => {
    const onChange = jest.fn();
    render(<MappingEditor table={table} mapping={{ x: 0, observed: 1, expected: 3 }} onChange={onChange} problems={[]} />);
    fireEvent.press(screen.getByRole('button', { name: 'Role of column “obs (rerun)”: Not used' }));
    fireEvent.press(screen.getByRole('radio', { name: 'Observed limit' }));
    expect(onChange).toHaveBeenCalledWith({ x: 0, observed: 2, expected: 3 });
    expect(screen.getByText('Observed limit moved from column “obs” to column “obs (rerun)”.')).toBeTruthy();
  });

  test('a column giving up its role for another says which role is now unset', () => {
    const onChange = jest.fn();
    render(<MappingEditor table={table} mapping={{ x: 0, observed: 1, expected: 3 }} onChange={onChange} problems={[]} />);
    fireEvent.press(screen.getByRole('button', { name: 'Role of column “exp”: Expected median' }));
    fireEvent.press(screen.getByRole('radio', { name: 'Observed limit' }));
    expect(onChange).toHaveBeenCalledWith({ x: 0, observed: 3 });
    expect(screen.getByText('Observed limit moved from column “obs” to column “exp”. Expected median is no longer set (it was column “exp”).')).toBeTruthy();
  });

  test('a choice that moves nothing says nothing; columns with numbers and no role are marked', () => {
    render(<MappingEditor table={table} mapping={{ x: 0, observed: 1, expected: 3 }} onChange={jest.fn()} problems={[]} />);
    expect(screen.getAllByText('Holds numbers but has no role: not stored')).toHaveLength(1);
    fireEvent.press(screen.getByRole('button', { name: 'Role of column “note”: Not used' }));
    fireEvent.press(screen.getByRole('radio', { name: 'Theory' }));
    expect(screen.queryByText(/moved from/)).toBeNull();
  });

  test('the preview names unused numeric columns and then does not say "all points are valid"', () => {
    const { rerender } = render(<PreviewStatus problems={[]} rowWord="Line" points={2} headers={table.headers} notUsed={[2]} />);
    expect(screen.getByText(/^Not used: “obs \(rerun\)” \(column 3\)\. It holds numbers but has no role/)).toBeTruthy();
    expect(screen.queryByText(/All 2 points are valid/)).toBeNull();
    expect(screen.getByText('The 2 points of the columns with a role are valid.')).toBeTruthy();
    rerender(<PreviewStatus problems={[]} rowWord="Line" points={2} headers={table.headers} notUsed={[]} />);
    expect(screen.getByText('All 2 points are valid.')).toBeTruthy();
    expect(screen.queryByText(/Not used/)).toBeNull();
  });
});
