import { QueryClient, QueryClientProvider } from '@tanstack/react-query';
import { fireEvent, render, screen } from '@testing-library/react-native';
import type { ReactNode } from 'react';
import { QuickPlot } from '@/components/plot/quick-plot';
import { ExclusionSummary } from '@/components/results/exclusion-summary';
import { ResultActions, ScanOrigin } from '@/components/screens/result-screen';
import { MappingEditor } from '@/components/upload/mapping-editor';
import { parseCsv } from '@/shared/curves/csv';
import type { ResultDetail, ResultVersion } from '@/shared/schemas/results';

jest.mock('expo-router', () => ({
  useRouter: () => ({ push: jest.fn(), replace: jest.fn(), setParams: jest.fn() }),
  Link: ({ children }: { children: ReactNode }) => children,
}));

const wrap = (ui: ReactNode) => render(<QueryClientProvider client={new QueryClient()}>{ui}</QueryClientProvider>);

const version: ResultVersion = {
  version: 1,
  state: 'draft',
  changeNote: '',
  createdBy: null,
  createdAt: '2026-11-30T10:00:00Z',
  publishedAt: null,
  retractionReason: null,
  resultId: 'r1',
  slug: 'dijet-z-prime',
  groupId: 'g1',
  groupName: 'Invented Dijet Team',
  isPublic: false,
  meta: { title: 'T', model: '', parameterName: 'm', parameterUnit: 'TeV', quantity: 'xsec', quantityUnit: 'fb', sqrtS: 18, luminosity: 140, cl: 0.95, method: 'asymptotic', reference: '', notes: '' },
  curve: { x: [1, 2, 3], observed: [3, 1, 0.5], expected: { '0': [2, 1, 0.4], '-1': [1.5, 0.8, 0.3], '1': [2.6, 1.3, 0.55] } },
  theory: { x: [1, 2, 3], central: [10, 2, 0.2] },
  plane: null,
  planeContours: null,
  exclusion: { ranges: { observed: [{ from: 1, to: 2.6, fromOpen: true }], expected: { '0': [{ from: 1.2, to: 2.75 }] } }, problem: null },
  permalink: null,
  sourceFile: null,
  fromScan: null,
  inputs: null,
  newerVersion: null,
};
const detail: ResultDetail = { id: 'r1', slug: 'dijet-z-prime', groupId: 'g1', groupName: 'Invented Dijet Team', isPublic: false, versions: [version] };

describe('actions on a result follow the role (the server still decides)', () => {
  test('a viewer or editor sees no actions', () => {
    wrap(<ResultActions detail={detail} version={version} role="viewer" />);
    expect(screen.queryByText('Actions')).toBeNull();
    wrap(<ResultActions detail={detail} version={version} role="editor" />);
    expect(screen.queryByText('Actions')).toBeNull();
  });
  test('an analyst may add versions and delete a draft, not publish', () => {
    wrap(<ResultActions detail={detail} version={version} role="analyst" />);
    expect(screen.getByRole('button', { name: 'Upload a new version' })).toBeTruthy();
    expect(screen.getByRole('button', { name: 'Delete draft version 1' })).toBeTruthy();
    expect(screen.queryByRole('button', { name: 'Publish version 1' })).toBeNull();
    expect(screen.getByText(/^A curator or owner of the group publishes drafts/)).toBeTruthy();
  });
  test('a curator may publish a draft, and retract or change the visibility of a published version', () => {
    wrap(<ResultActions detail={detail} version={version} role="curator" />);
    expect(screen.getByRole('checkbox', { name: 'Make the result public' })).toBeTruthy();
    // Publishing asks first (it is permanent); "Not yet" goes back.
    fireEvent.press(screen.getByRole('button', { name: 'Publish version 1' }));
    expect(screen.getByText(/This is permanent/)).toBeTruthy();
    expect(screen.getByRole('button', { name: 'Publish now' })).toBeTruthy();
    fireEvent.press(screen.getByRole('button', { name: 'Not yet' }));
    expect(screen.queryByRole('button', { name: 'Publish now' })).toBeNull();
    const published = { ...version, state: 'published' as const, publishedAt: '2026-12-01T00:00:00Z' };
    wrap(<ResultActions detail={{ ...detail, versions: [published] }} version={published} role="curator" />);
    fireEvent.press(screen.getByRole('button', { name: 'Retract version 1' }));
    expect(screen.getByLabelText('Reason for the retraction')).toBeTruthy();
    expect(screen.getByRole('button', { name: 'Make public' })).toBeTruthy();
  });
});

test('the mapping editor shows each column with its role and moves a role to the chosen column', () => {
  const table = parseCsv('mass,obs,obs (rerun)\n1,2,2\n2,1,1\n');
  const onChange = jest.fn();
  render(<MappingEditor table={table} mapping={{ x: 0, observed: 1 }} onChange={onChange} problems={[{ row: 3, column: 'obs', reason: 'bad' }]} />);
  expect(screen.getByRole('button', { name: 'Role of column “mass”: Parameter (x)' })).toBeTruthy();
  expect(screen.getByText('Problem in line 3')).toBeTruthy();
  fireEvent.press(screen.getByRole('button', { name: 'Role of column “obs (rerun)”: Not used' }));
  fireEvent.press(screen.getByRole('radio', { name: 'Observed limit' }));
  expect(onChange).toHaveBeenCalledWith({ x: 0, observed: 2 });
});

test('excluded ranges read as "excluded: …" with open ends; without theory the reason is given', () => {
  render(<ExclusionSummary version={version} />);
  expect(screen.getByText('excluded: from below 1 to 2.6 TeV')).toBeTruthy();
  expect(screen.getByText('excluded: 1.2–2.75 TeV')).toBeTruthy();
  render(<ExclusionSummary version={{ ...version, theory: null, exclusion: { ranges: null, problem: null } }} />);
  expect(screen.getByText('No theory curve is stored with this version, so there is no excluded range.')).toBeTruthy();
});

test('the quick plot draws once it knows its width and describes itself to screen readers', () => {
  render(<QuickPlot curve={version.curve!} theory={version.theory} xLabel="m [TeV]" yLabel="Upper limit on σ×B [fb]" height={240} />);
  const img = screen.getByLabelText(/^Plot of observed, expected median, ±1σ band, theory for Upper limit on σ×B \[fb\] against m \[TeV\]/);
  expect(img.props.role).toBe('img');
  expect(screen.queryByText('m [TeV]')).toBeNull();
  fireEvent(img, 'layout', { nativeEvent: { layout: { width: 360, height: 240, x: 0, y: 0 } } });
  // Axis titles are SVG text children (never markup); tick labels sit at the decades of the log axis.
  const texts = screen.UNSAFE_root.findAll((n) => (n.type as unknown) === 'RNSVGTSpan').map((n) => n.props.content as string);
  expect(texts).toEqual(expect.arrayContaining(['m [TeV]', 'Upper limit on σ×B [fb]', '0.1', '1', '10']));
  // ±1σ band, theory, expected median and observed: four paths (no ±2σ band in this curve).
  expect(screen.UNSAFE_root.findAll((n) => (n.type as unknown) === 'RNSVGPath')).toHaveLength(4);
});

test("a computed draft links to its scan's diagnostics and lists the points that warned or failed", () => {
  render(
    <ScanOrigin
      groupId="g1"
      unit="GeV"
      origin={{ scanId: 's1', points: [{ index: 0, x: 1000, warnings: ['only 800 pseudo-experiments: the ±2σ band needs about 18,000'], error: null }, { index: 3, x: 1300, warnings: [], error: 'model.signal: must not be all zero' }] }}
    />,
  );
  expect(screen.getByText('2 grid points need a look before publishing:')).toBeTruthy();
  expect(screen.getByText('x = 1000 GeV: only 800 pseudo-experiments: the ±2σ band needs about 18,000')).toBeTruthy();
  expect(screen.getByText('x = 1300 GeV: failed (model.signal: must not be all zero)')).toBeTruthy();
  render(<ScanOrigin groupId="g1" unit="" origin={{ scanId: 's1', points: [] }} />);
  expect(screen.getByText('No grid point warned.')).toBeTruthy();
});
