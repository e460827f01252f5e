import { ActivityIndicator, StyleSheet, View } from 'react-native';
import { colors, space } from '@/themes/tokens';
import { Text } from './text';

export function Loading({ label = 'Loading…' }: { label?: string }) {
  return (
    <View style={styles.box} role="progressbar" aria-label={label} aria-busy>
      <ActivityIndicator color={colors.primary} />
      <Text variant="muted">{label}</Text>
    </View>
  );
}

const styles = StyleSheet.create({ box: { padding: space.xl, alignItems: 'center', gap: space.sm } });
