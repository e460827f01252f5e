import { render, screen } from '@testing-library/react-native';
import { fmtFitted } from '@/components/compute/limit-summary';
import { PullsTable } from '@/components/compute/pulls-table';

describe('the diagnostics of a fit', () => {
  test('fitted values below the minimiser tolerance read as 0, others keep three digits', () => {
    expect(fmtFitted(-3.1e-17)).toBe('0');
    expect(fmtFitted(4e-7)).toBe('0');
    expect(fmtFitted(0.0123456)).toBe('0.0123');
    expect(fmtFitted(-1.5)).toBe('-1.5');
    expect(fmtFitted(null)).toBe('—');
  });

  test('pulls: numbers, a ±1σ/±2σ scale, and one plot per parameter named for screen readers', () => {
    render(
      <PullsTable
        pulls={[
          { name: 'luminosity', value: 0.31, error: 0.97, valueAtZero: -2e-12 },
          { name: 'jet energy scale', value: -3.4, error: 0.5, valueAtZero: -1.2 },
        ]}
      />,
    );
    expect(screen.getByLabelText('Pull scale from minus 2 sigma to plus 2 sigma')).toBeTruthy();
    for (const t of ['−2σ', '0', '+2σ']) expect(screen.getAllByText(t).length).toBeGreaterThan(0);
    expect(screen.getByLabelText('Pull of luminosity: 0.31 plus or minus 0.97 prior widths')).toBeTruthy();
    expect(screen.getByLabelText('Pull of jet energy scale: -3.4 plus or minus 0.5 prior widths, outside the plotted range')).toBeTruthy();
    // The tiny pull at μ = 0 is shown as 0.
    expect(screen.getAllByText('0').length).toBeGreaterThan(1);
  });
});
