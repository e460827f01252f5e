import { fireEvent, render, screen } from '@testing-library/react-native';
import { defaultRerunToys, RerunPoint } from '@/components/scans/rerun-point';
import { ApiError } from '@/shared/api-client';

test('the count offered first is four times the current one, within the bound', () => {
  expect(defaultRerunToys(500, 100_000)).toBe(2000);
  expect(defaultRerunToys(500, 1200)).toBe(1200);
  expect(defaultRerunToys(500, 501)).toBe(501);
});

test('the field is labelled, starts at 4× the current count and sends the typed count', () => {
  const onRerun = jest.fn();
  render(<RerunPoint x="700" current={500} max={100_000} pending={false} error={null} onRerun={onRerun} />);
  expect(screen.getByText('Rerun this point with more pseudo-experiments')).toBeTruthy();
  const field = screen.getByLabelText('Pseudo-experiments per hypothesis');
  expect(field.props.value).toBe('2000');
  fireEvent.press(screen.getByRole('button', { name: 'Rerun this point' }));
  expect(onRerun).toHaveBeenLastCalledWith(2000);
  fireEvent.changeText(field, '12,000');
  fireEvent.press(screen.getByRole('button', { name: 'Rerun this point' }));
  expect(onRerun).toHaveBeenLastCalledWith(12_000);
});

test('a count not above the current one, above the bound or not whole is refused by the field', () => {
  const onRerun = jest.fn();
  render(<RerunPoint x="700" current={500} max={6000} pending={false} error={null} onRerun={onRerun} />);
  const field = screen.getByLabelText('Pseudo-experiments per hypothesis');
  for (const [typed, said] of [
    ['500', "Enter more than the point's current 500"],
    ['6001', 'At most 6,000 for this point'],
    ['1.5', 'Enter a whole number of pseudo-experiments'],
  ] as const) {
    fireEvent.changeText(field, typed);
    fireEvent.press(screen.getByRole('button', { name: 'Rerun this point' }));
    expect(screen.getByRole('alert').props.children).toContain(said);
    expect(screen.getByLabelText('Pseudo-experiments per hypothesis').props['aria-invalid']).toBe(true);
  }
  expect(onRerun).not.toHaveBeenCalled();
});

test("the server's refusal naming toys is shown by the field; other refusals above the button", () => {
  const refusal = new ApiError(400, 'validation_failed', 'The scan cannot be started: toys: must be at most 6,000', [{ field: 'toys', message: 'must be at most 6,000 for this point' }]);
  const { rerender } = render(<RerunPoint x="700" current={500} max={6000} pending={false} error={refusal} onRerun={jest.fn()} />);
  expect(screen.getByRole('alert').props.children).toBe('Must be at most 6,000 for this point');
  rerender(<RerunPoint x="700" current={500} max={6000} pending={false} error={new ApiError(409, 'running', 'This scan is still running', [])} onRerun={jest.fn()} />);
  expect(screen.getByText('This scan is still running')).toBeTruthy();
});

test('a point already at the bound offers no rerun', () => {
  render(<RerunPoint x="700" current={6000} max={6000} pending={false} error={null} onRerun={jest.fn()} />);
  expect(screen.queryByRole('button', { name: 'Rerun this point' })).toBeNull();
});

test('a point of a two-parameter scan is named by (x, y) in the text and the group\'s name', () => {
  render(<RerunPoint x="1000" y="150" current={500} max={100_000} pending={false} error={null} onRerun={jest.fn()} />);
  expect(screen.getByLabelText('Rerun the point (x, y) = (1000, 150) with more pseudo-experiments')).toBeTruthy();
  expect(screen.getByText(/only \(x, y\) = \(1000, 150\) is computed again/)).toBeTruthy();
  expect(screen.queryByText(/only x = 1000 /)).toBeNull();
  render(<RerunPoint x="1000" y="150" current={6000} max={6000} pending={false} error={null} onRerun={jest.fn()} />);
  expect(screen.getByText(/^The point \(x, y\) = \(1000, 150\) already has 6,000/)).toBeTruthy();
});

test('a one-parameter point is named by x', () => {
  render(<RerunPoint x="700" current={500} max={100_000} pending={false} error={null} onRerun={jest.fn()} />);
  expect(screen.getByLabelText('Rerun the point x = 700 with more pseudo-experiments')).toBeTruthy();
  expect(screen.getByText(/only x = 700 is computed again/)).toBeTruthy();
});
