import type { ReactNode } from 'react';
import { ScrollView, StyleSheet, View } from 'react-native';
import { colors, maxContentWidth, space } from '@/themes/tokens';
import { Text } from './text';

/** A scrolling page with a title, content capped at maxContentWidth on wide screens. */
export function Screen({ title, subtitle, actions, children }: { title: string; subtitle?: string; actions?: ReactNode; children: ReactNode }) {
  return (
    <ScrollView style={styles.scroll} contentContainerStyle={styles.content} keyboardShouldPersistTaps="handled">
      <View style={styles.inner} role="main">
        <View style={styles.header}>
          <View style={styles.titles}>
            <Text variant="heading">{title}</Text>
            {subtitle ? <Text variant="muted">{subtitle}</Text> : null}
          </View>
          {actions ? <View style={styles.actions}>{actions}</View> : null}
        </View>
        {children}
      </View>
    </ScrollView>
  );
}

const styles = StyleSheet.create({
  scroll: { flex: 1, backgroundColor: colors.bg },
  content: { padding: space.lg, paddingBottom: space.xxl },
  inner: { width: '100%', maxWidth: maxContentWidth, alignSelf: 'center', gap: space.lg },
  header: { flexDirection: 'row', flexWrap: 'wrap', alignItems: 'flex-end', justifyContent: 'space-between', gap: space.md },
  titles: { gap: space.xs, flexShrink: 1 },
  actions: { flexDirection: 'row', gap: space.sm, flexWrap: 'wrap' },
});
