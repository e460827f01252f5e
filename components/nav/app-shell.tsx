import { Link, usePathname } from 'expo-router';
import { confirmLeave } from '@/hooks/use-leave-guard';
import type { ReactNode } from 'react';
import { Pressable, StyleSheet, View } from 'react-native';
import { useSafeAreaInsets } from 'react-native-safe-area-context';
import { useIsWide } from '@/hooks/use-layout';
import { useMe } from '@/hooks/use-session';
import { bottomTabHeight, colors, fonts, sideNavWidth, space } from '@/themes/tokens';
import { Text } from '../ui/text';
import { GroupSwitcher } from './group-switcher';
import { isActive, NAV_ITEMS } from './nav-items';

/** Signed-in frame: side navigation on wide screens, compact header + bottom tabs on phones. */
export function AppShell({ children }: { children: ReactNode }) {
  const wide = useIsWide();
  const pathname = usePathname();
  const me = useMe();
  const insets = useSafeAreaInsets();
  const items = NAV_ITEMS.filter((i) => !i.devOnly || me.data?.devTools);

  if (wide) {
    return (
      <View style={styles.row}>
        <View style={styles.side} role="navigation" aria-label="Main">
          <Text style={styles.brand}>Bandwright</Text>
          <GroupSwitcher dark />
          <View style={styles.sideItems}>
            {items.map((item) => {
              const active = isActive(item, pathname);
              return (
                <Link key={item.path} href={item.href} asChild onPress={(e) => (confirmLeave() ? undefined : e.preventDefault())}>
                  <Pressable role="link" aria-label={item.label} aria-current={active ? 'page' : undefined} style={StyleSheet.flatten([styles.sideItem, active && styles.sideItemActive])}>
                    <Text style={[styles.sideIcon, active && styles.sideTextActive]}>{item.icon}</Text>
                    <Text style={[styles.sideText, active && styles.sideTextActive]}>{item.label}</Text>
                  </Pressable>
                </Link>
              );
            })}
          </View>
          <Text variant="caption" style={styles.sideUser} numberOfLines={1}>
            {me.data?.user.email}
          </Text>
        </View>
        <View style={styles.main}>{children}</View>
      </View>
    );
  }

  return (
    <View style={[styles.column, { paddingTop: insets.top }]}>
      <View style={styles.header}>
        <Text style={styles.brandSmall}>Bandwright</Text>
        <GroupSwitcher />
      </View>
      <View style={styles.main}>{children}</View>
      <View style={[styles.tabs, { paddingBottom: insets.bottom }]} role="navigation" aria-label="Main">
        {items.map((item) => {
          const active = isActive(item, pathname);
          const short = item.label.replace(' (development)', '');
          return (
            <Link key={item.path} href={item.href} asChild onPress={(e) => (confirmLeave() ? undefined : e.preventDefault())}>
              <Pressable role="link" aria-label={item.label} aria-current={active ? 'page' : undefined} style={styles.tab}>
                <Text style={[styles.tabIcon, active && styles.tabActive]}>{item.icon}</Text>
                <Text style={[styles.tabText, active && styles.tabActive]}>{short}</Text>
              </Pressable>
            </Link>
          );
        })}
      </View>
    </View>
  );
}

const styles = StyleSheet.create({
  row: { flex: 1, flexDirection: 'row', backgroundColor: colors.bg },
  column: { flex: 1, backgroundColor: colors.bg },
  side: { width: sideNavWidth, backgroundColor: colors.navBg, padding: space.lg, gap: space.lg, zIndex: 2 },
  brand: { color: colors.navTextActive, fontFamily: fonts.bold, fontSize: 20 },
  sideItems: { gap: space.xs, zIndex: 1 },
  sideItem: { flexDirection: 'row', alignItems: 'center', gap: space.md, paddingHorizontal: space.md, minHeight: 44, borderRadius: 8 },
  sideItemActive: { backgroundColor: colors.navActive },
  sideIcon: { color: colors.navText, width: 18, textAlign: 'center' },
  sideText: { color: colors.navText, fontFamily: fonts.medium },
  sideTextActive: { color: colors.navTextActive },
  sideUser: { marginTop: 'auto', color: colors.navText },
  main: { flex: 1, zIndex: 0 },
  header: {
    flexDirection: 'row',
    alignItems: 'center',
    gap: space.md,
    paddingHorizontal: space.lg,
    paddingVertical: space.sm,
    backgroundColor: colors.surface,
    borderBottomWidth: 1,
    borderBottomColor: colors.border,
    zIndex: 2,
  },
  brandSmall: { fontFamily: fonts.bold, fontSize: 17, color: colors.primary },
  tabs: { flexDirection: 'row', minHeight: bottomTabHeight, backgroundColor: colors.surface, borderTopWidth: 1, borderTopColor: colors.border },
  tab: { flex: 1, alignItems: 'center', justifyContent: 'center', gap: 2, paddingVertical: space.xs },
  tabIcon: { fontSize: 18, color: colors.textMuted },
  tabText: { fontSize: 11, color: colors.textMuted, fontFamily: fonts.medium },
  tabActive: { color: colors.primary },
});
