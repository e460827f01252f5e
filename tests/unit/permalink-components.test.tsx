import { fireEvent, render, screen } from '@testing-library/react-native';
import type { ReactNode } from 'react';
import { CiteControl } from '@/components/cite/cite-control';
import { NewerVersionNotice } from '@/components/results/newer-version-notice';

jest.mock('expo-router', () => ({
  Link: ({ children, href }: { children: ReactNode; href: string }) => {
    const { Text } = jest.requireActual('react-native');
    return <Text testID={`link:${href}`}>{children}</Text>;
  },
}));

describe('the newer-version notice', () => {
  test('a superseded version names the newer one and links to its permanent link', () => {
    render(<NewerVersionNotice slug="halcyon-zprime" version={1} state="superseded" newerVersion={3} />);
    expect(screen.getByText('A newer version (v3) of this result is published.')).toBeTruthy();
    expect(screen.getByText('This version (v1) is superseded and kept for reference.')).toBeTruthy();
    expect(screen.getByTestId('link:/r/halcyon-zprime/v3')).toBeTruthy();
  });
  test('a retracted version says so', () => {
    render(<NewerVersionNotice slug="plover" version={2} state="retracted" newerVersion={3} />);
    expect(screen.getByText('Use it instead of this retracted version (v2).')).toBeTruthy();
  });
});

describe('the Cite panel', () => {
  const source = {
    kind: 'result' as const,
    title: 'Lanternfish tt̄ resonance {search} 100%',
    groupName: 'Invented Top Team',
    version: 4,
    url: 'https://bandwright.example/r/lanternfish-ttbar/v4',
    date: '2031-05-06T10:00:00Z',
    id: 'lanternfish-ttbar',
  };
  test('folded at first; opened, it shows BibTeX and CSL-JSON with the permanent link and version, as text', () => {
    render(<CiteControl source={source} what="version 4 of this result" />);
    const toggle = screen.getByRole('button', { name: 'Cite version 4 of this result' });
    expect(screen.queryByLabelText('BibTeX text')).toBeNull();
    fireEvent.press(toggle);
    const bibtex = screen.getByLabelText('BibTeX text').props.value as string;
    expect(bibtex).toContain('url = {https://bandwright.example/r/lanternfish-ttbar/v4}');
    expect(bibtex).toContain('version = {4}');
    // The title's braces and percent are escaped for BibTeX by shared/cite.ts.
    expect(bibtex).toContain('\\textbraceleft{}search\\textbraceright{} 100\\%');
    const csl = JSON.parse(screen.getByLabelText('CSL-JSON text').props.value as string);
    expect(csl[0]).toMatchObject({ URL: source.url, version: '4', title: source.title, type: 'dataset' });
    expect(screen.getByRole('button', { name: 'Copy BibTeX' })).toBeTruthy();
    expect(screen.getByRole('button', { name: 'Copy CSL-JSON' })).toBeTruthy();
    fireEvent.press(screen.getByRole('button', { name: 'Close the citation' }));
    expect(screen.queryByLabelText('BibTeX text')).toBeNull();
  });
});
