import type { ReactNode } from 'react';
import { ScrollView, StyleSheet, View } from 'react-native';
import { colors, fonts, space } from '@/themes/tokens';
import { Card } from '../ui/card';
import { Text } from '../ui/text';

/** Centered card used by the signed-out screens. */
export function AuthFrame({ title, children }: { title: string; children: ReactNode }) {
  return (
    <ScrollView style={styles.scroll} contentContainerStyle={styles.content} keyboardShouldPersistTaps="handled">
      <View style={styles.inner} role="main">
        <Text style={styles.brand}>Bandwright</Text>
        <Text variant="muted" style={styles.tagline}>
          Upper limits and their figures, kept and shared by your group.
        </Text>
        <Card>
          <Text variant="title">{title}</Text>
          {children}
        </Card>
      </View>
    </ScrollView>
  );
}

const styles = StyleSheet.create({
  scroll: { flex: 1, backgroundColor: colors.bg },
  content: { flexGrow: 1, justifyContent: 'center', padding: space.lg },
  inner: { width: '100%', maxWidth: 420, alignSelf: 'center', gap: space.md },
  brand: { fontFamily: fonts.bold, fontSize: 28, color: colors.primary, textAlign: 'center' },
  tagline: { textAlign: 'center', marginBottom: space.sm },
});
