/**
 * The scan form's pseudo-experiment count: untouched it is enough for the −2σ band edge at the CL
 * typed (toysForBands: 20 tail pseudo-experiments where CLs+b = α·Φ(−2), common practice for
 * Monte-Carlo p-values), and a smaller typed count is warned about beside the field.
 */
import { QueryClient, QueryClientProvider } from '@tanstack/react-query';
import { fireEvent, render, screen } from '@testing-library/react-native';
import type { ReactNode } from 'react';
import { ScanStart } from '@/components/compute/scan-start';

jest.mock('expo-router', () => ({
  useRouter: () => ({ push: jest.fn(), replace: jest.fn(), setParams: jest.fn() }),
  Link: ({ children }: { children: ReactNode }) => children,
}));

test('the default count follows the CL, and a smaller one is warned about', () => {
  render(
    <QueryClientProvider client={new QueryClient()}>
      <ScanStart groupId="g1" />
    </QueryClientProvider>,
  );
  fireEvent.press(screen.getByRole('radio', { name: 'Pseudo-experiments' }));
  const field = screen.getByLabelText('Pseudo-experiments per hypothesis');
  // 95% CL: 20 / (0.05 · Φ(−2)) = 17,580, rounded up to 18,000 (Φ(−2) = 0.02275, from memory).
  expect(field.props.value).toBe('18000');
  expect(screen.getByText('Enough for the −2σ band edge at 95% CL (at least 18,000)')).toBeTruthy();
  fireEvent.changeText(screen.getByLabelText('Confidence level'), '0.9');
  expect(screen.getByLabelText('Pseudo-experiments per hypothesis').props.value).toBe('9000');
  fireEvent.changeText(screen.getByLabelText('Pseudo-experiments per hypothesis'), '5000');
  expect(screen.getByText('Fewer than 9,000: at 90% CL the −2σ band edge would rest on fewer than 20 pseudo-experiments in its tail')).toBeTruthy();
});
