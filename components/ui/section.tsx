import { useState, type ReactNode } from 'react';
import { Pressable, StyleSheet, View } from 'react-native';
import { colors, fonts, radii, space } from '@/themes/tokens';
import { Text } from './text';

/** A titled block that can be folded away (phone layouts keep long control lists short). */
export function Section({ title, children, initiallyOpen = true }: { title: string; children: ReactNode; initiallyOpen?: boolean }) {
  const [open, setOpen] = useState(initiallyOpen);
  return (
    <View style={styles.box}>
      <Pressable role="button" aria-expanded={open} aria-label={`${title}: ${open ? 'fold' : 'unfold'}`} onPress={() => setOpen((o) => !o)} style={styles.head}>
        <Text style={styles.title}>{title}</Text>
        <Text style={styles.chev}>{open ? '▾' : '▸'}</Text>
      </Pressable>
      {open ? <View style={styles.body}>{children}</View> : null}
    </View>
  );
}

const styles = StyleSheet.create({
  box: { backgroundColor: colors.surface, borderRadius: radii.lg, borderWidth: 1, borderColor: colors.border },
  head: { flexDirection: 'row', alignItems: 'center', justifyContent: 'space-between', paddingHorizontal: space.lg, minHeight: 48 },
  title: { fontFamily: fonts.semibold, fontSize: 16 },
  chev: { color: colors.textMuted },
  body: { paddingHorizontal: space.lg, paddingBottom: space.lg, gap: space.md },
});
