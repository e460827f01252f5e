import type { ReactNode } from 'react';
import { StyleSheet, View } from 'react-native';
import { colors, radii, space } from '@/themes/tokens';
import { Text } from './text';

export function EmptyState({ title, message, action }: { title: string; message: string; action?: ReactNode }) {
  return (
    <View style={styles.box} role="region" aria-label={title}>
      <Text variant="title">{title}</Text>
      <Text variant="muted" style={styles.message}>
        {message}
      </Text>
      {action}
    </View>
  );
}

const styles = StyleSheet.create({
  box: {
    alignItems: 'center',
    gap: space.md,
    padding: space.xxl,
    borderRadius: radii.lg,
    borderWidth: 1,
    borderStyle: 'dashed',
    borderColor: colors.borderStrong,
    backgroundColor: colors.surface,
  },
  message: { textAlign: 'center', maxWidth: 480 },
});
