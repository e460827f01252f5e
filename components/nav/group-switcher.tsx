import { useRouter } from 'expo-router';
import { confirmLeave } from '@/hooks/use-leave-guard';
import { useState } from 'react';
import { Pressable, StyleSheet, View } from 'react-native';
import { ROLE_LABELS } from '@/shared/access';
import { useCurrentGroup } from '@/hooks/use-current-group';
import { colors, fonts, radii, space } from '@/themes/tokens';
import { Text } from '../ui/text';

/** Shows the current group; opens a list to switch groups or create one. */
export function GroupSwitcher({ dark = false }: { dark?: boolean }) {
  const { group, groups, select } = useCurrentGroup();
  const [open, setOpen] = useState(false);
  const router = useRouter();
  const fg = dark ? colors.navTextActive : colors.text;
  return (
    <View style={styles.wrap}>
      <Pressable
        role="button"
        aria-label={group ? `Current group: ${group.name}. Switch group` : 'Choose or create a group'}
        aria-expanded={open}
        onPress={() => setOpen((o) => !o)}
        style={[styles.trigger, dark ? styles.triggerDark : styles.triggerLight]}
      >
        <View style={styles.triggerText}>
          <Text numberOfLines={1} style={[styles.name, { color: fg }]}>
            {group?.name ?? 'No group yet'}
          </Text>
          {group ? <Text style={[styles.role, { color: dark ? colors.navText : colors.textMuted }]}>{ROLE_LABELS[group.role]}</Text> : null}
        </View>
        <Text style={{ color: fg }}>{open ? '▴' : '▾'}</Text>
      </Pressable>
      {open ? (
        <View role="menu" aria-label="Groups" style={styles.menu}>
          {groups.map((g) => (
            <Pressable
              key={g.id}
              role="menuitem"
              aria-label={`Switch to ${g.name}`}
              aria-current={g.id === group?.id || undefined}
              onPress={() => {
                select(g.id);
                setOpen(false);
              }}
              style={[styles.item, g.id === group?.id && styles.itemActive]}
            >
              <Text numberOfLines={1} style={styles.itemName}>
                {g.name}
              </Text>
              <Text variant="caption">{ROLE_LABELS[g.role]}</Text>
            </Pressable>
          ))}
          <Pressable
            role="menuitem"
            aria-label="Create a group"
            onPress={() => {
              setOpen(false);
              if (confirmLeave()) router.push('/groups/new');
            }}
            style={styles.item}
          >
            <Text style={styles.create}>+ Create a group</Text>
          </Pressable>
        </View>
      ) : null}
    </View>
  );
}

const styles = StyleSheet.create({
  wrap: { position: 'relative', zIndex: 10, flexShrink: 1, minWidth: 0 },
  trigger: { flexDirection: 'row', alignItems: 'center', gap: space.sm, paddingHorizontal: space.md, minHeight: 44, borderRadius: radii.md },
  triggerDark: { backgroundColor: colors.navActive },
  triggerLight: { backgroundColor: colors.surfaceAlt },
  triggerText: { flexShrink: 1, minWidth: 0 },
  name: { fontFamily: fonts.semibold, fontSize: 14 },
  role: { fontSize: 12 },
  menu: {
    position: 'absolute',
    top: 48,
    left: 0,
    minWidth: 260,
    backgroundColor: colors.surface,
    borderRadius: radii.md,
    borderWidth: 1,
    borderColor: colors.border,
    paddingVertical: space.xs,
    shadowColor: '#000',
    shadowOpacity: 0.15,
    shadowRadius: 12,
    shadowOffset: { width: 0, height: 4 },
  },
  item: { paddingHorizontal: space.md, paddingVertical: space.sm, minHeight: 44, justifyContent: 'center' },
  itemActive: { backgroundColor: colors.primarySoft },
  itemName: { fontFamily: fonts.medium },
  create: { color: colors.primary, fontFamily: fonts.semibold },
});
