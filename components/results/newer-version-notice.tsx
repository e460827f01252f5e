import { Link, type Href } from 'expo-router';
import { StyleSheet, View } from 'react-native';
import type { ResultState } from '@/shared/schemas/results';
import { colors, fonts, radii, space } from '@/themes/tokens';
import { Text } from '../ui/text';
import { permalinkPath } from './format';

/** What a reader of an older version is told about it, by its state. */
function stateLine(state: ResultState, version: number): string {
  if (state === 'retracted') return `Use it instead of this retracted version (v${version}).`;
  if (state === 'superseded') return `This version (v${version}) is superseded and kept for reference.`;
  return `You are reading version ${version}.`;
}

/**
 * On a permanent link whose result has a newer published version the reader may see: says so, how
 * this version stands (superseded or retracted), and links to the newer one's permanent link.
 */
export function NewerVersionNotice({ slug, version, state, newerVersion }: { slug: string; version: number; state: ResultState; newerVersion: number }) {
  const tone = state === 'retracted' ? { bg: colors.dangerSoft, fg: colors.danger } : { bg: colors.warningSoft, fg: colors.warning };
  return (
    <View role="status" aria-label="A newer version is published" style={[styles.box, { backgroundColor: tone.bg, borderColor: tone.fg }]}>
      <Text style={[styles.strong, { color: tone.fg }]}>A newer version (v{newerVersion}) of this result is published.</Text>
      <Text style={{ color: tone.fg }}>{stateLine(state, version)}</Text>
      <Link href={permalinkPath(slug, newerVersion) as Href} style={styles.link} aria-label={`Open version ${newerVersion}, the newer version`}>
        Open version {newerVersion}
      </Link>
    </View>
  );
}

const styles = StyleSheet.create({
  box: { borderWidth: 1, borderRadius: radii.md, padding: space.md, gap: space.xs },
  strong: { fontFamily: fonts.semibold },
  link: { color: colors.primary, fontFamily: fonts.semibold, fontSize: 15, lineHeight: 22, textDecorationLine: 'underline', alignSelf: 'flex-start' },
});
