import { Link } from 'expo-router';
import type { ReactNode } from 'react';
import { StyleSheet, View } from 'react-native';
import { useSafeAreaInsets } from 'react-native-safe-area-context';
import { useIsWide } from '@/hooks/use-layout';
import { useMe } from '@/hooks/use-session';
import { colors, fonts, space } from '@/themes/tokens';

/** Frame of the pages anyone may open (public results, permanent links), signed in or not. */
export function PublicFrame({ children }: { children: ReactNode }) {
  const me = useMe();
  const insets = useSafeAreaInsets();
  const signedIn = !!me.data;
  // Phones get the short words (the header has room for three links); the names stay whole for screen readers.
  const wide = useIsWide();
  return (
    <View style={[styles.page, { paddingTop: insets.top }]}>
      <View style={styles.header} role="navigation" aria-label="Site">
        <Link href={signedIn ? '/' : '/public'} style={styles.brand}>
          Bandwright
        </Link>
        <View style={styles.links}>
          <Link href="/public" style={styles.link} aria-label="Public results">
            {wide ? 'Public results' : 'Results'}
          </Link>
          <Link href="/public/figures" style={styles.link} aria-label="Public figures">
            {wide ? 'Public figures' : 'Figures'}
          </Link>
          {me.isPending ? null : signedIn ? (
            <Link href="/" style={styles.link}>
              Your results
            </Link>
          ) : (
            <Link href="/sign-in" style={styles.link}>
              Sign in
            </Link>
          )}
        </View>
      </View>
      <View style={styles.main}>{children}</View>
    </View>
  );
}

const styles = StyleSheet.create({
  page: { flex: 1, backgroundColor: colors.bg },
  header: {
    flexDirection: 'row',
    alignItems: 'center',
    justifyContent: 'space-between',
    gap: space.md,
    paddingHorizontal: space.lg,
    minHeight: 52,
    backgroundColor: colors.surface,
    borderBottomWidth: 1,
    borderBottomColor: colors.border,
  },
  brand: { fontFamily: fonts.bold, fontSize: 18, color: colors.primary },
  links: { flexDirection: 'row', flexWrap: 'wrap', columnGap: space.lg, alignItems: 'center', justifyContent: 'flex-end', flexShrink: 1 },
  link: { color: colors.primary, fontFamily: fonts.semibold, fontSize: 15, lineHeight: 22, paddingVertical: space.sm },
  main: { flex: 1 },
});
