import { Pressable, StyleSheet, View } from 'react-native';
import { colors, radii, space } from '@/themes/tokens';
import { Text } from './text';

export function Checkbox({ label, checked, onChange, hint }: { label: string; checked: boolean; onChange: (v: boolean) => void; hint?: string }) {
  return (
    <Pressable role="checkbox" aria-checked={checked} aria-label={label} onPress={() => onChange(!checked)} style={styles.row}>
      <View style={[styles.box, checked && styles.boxOn]}>{checked ? <Text style={styles.tick}>✓</Text> : null}</View>
      <View style={styles.text}>
        <Text>{label}</Text>
        {hint ? <Text variant="caption">{hint}</Text> : null}
      </View>
    </Pressable>
  );
}

const styles = StyleSheet.create({
  row: { flexDirection: 'row', alignItems: 'flex-start', gap: space.sm, minHeight: 36, paddingVertical: space.xs },
  box: { width: 20, height: 20, marginTop: 1, borderWidth: 2, borderColor: colors.borderStrong, borderRadius: radii.sm, alignItems: 'center', justifyContent: 'center', backgroundColor: colors.surface },
  boxOn: { backgroundColor: colors.primary, borderColor: colors.primary },
  tick: { color: colors.primaryText, fontSize: 13, lineHeight: 16 },
  text: { flex: 1, gap: 2 },
});
