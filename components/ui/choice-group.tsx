import { Pressable, StyleSheet, View } from 'react-native';
import { colors, fonts, radii, space } from '@/themes/tokens';
import { Text } from './text';

export type Choice<T extends string> = { value: T; label: string; disabled?: boolean };

/** A row of radio chips (keyboard and screen-reader friendly alternative to a select). */
export function ChoiceGroup<T extends string>({
  label,
  value,
  choices,
  onChange,
}: {
  label: string;
  value: T;
  choices: Choice<T>[];
  onChange: (v: T) => void;
}) {
  return (
    <View role="radiogroup" aria-label={label} style={styles.row}>
      {choices.map((c) => {
        const selected = c.value === value;
        return (
          <Pressable
            key={c.value}
            role="radio"
            aria-checked={selected}
            aria-label={c.label}
            aria-disabled={c.disabled || undefined}
            disabled={c.disabled}
            onPress={() => onChange(c.value)}
            style={[styles.chip, selected && styles.selected, c.disabled && styles.disabled]}
          >
            <Text style={[styles.text, selected && styles.selectedText]}>{c.label}</Text>
          </Pressable>
        );
      })}
    </View>
  );
}

const styles = StyleSheet.create({
  row: { flexDirection: 'row', flexWrap: 'wrap', gap: space.sm },
  chip: {
    minHeight: 36,
    paddingHorizontal: space.md,
    justifyContent: 'center',
    borderRadius: radii.pill,
    borderWidth: 1,
    borderColor: colors.borderStrong,
    backgroundColor: colors.surface,
  },
  selected: { backgroundColor: colors.primary, borderColor: colors.primary },
  disabled: { opacity: 0.4 },
  text: { fontFamily: fonts.medium, fontSize: 14 },
  selectedText: { color: colors.primaryText },
});
