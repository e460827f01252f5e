import { useState } from 'react';
import { Pressable, StyleSheet, View } from 'react-native';
import { colors, fonts, radii, space } from '@/themes/tokens';
import { Text } from './text';

export type SelectOption<T extends string> = { value: T; label: string };

/**
 * A compact single choice: a button that shows the current value and opens the options below it
 * as radios (in the flow of the page, so it never hides behind a neighbour).
 */
export function Select<T extends string>({
  label,
  value,
  options,
  onChange,
  showLabel = true,
  accessibilityLabel,
}: {
  label: string;
  value: T;
  options: SelectOption<T>[];
  onChange: (v: T) => void;
  showLabel?: boolean;
  /** Spoken name of the control when it differs from the visible label. */
  accessibilityLabel?: string;
}) {
  const [open, setOpen] = useState(false);
  const current = options.find((o) => o.value === value);
  const name = accessibilityLabel ?? label;
  return (
    <View style={styles.wrap}>
      {showLabel ? <Text variant="label">{label}</Text> : null}
      <Pressable
        role="button"
        aria-label={`${name}: ${current?.label ?? 'none'}`}
        aria-expanded={open}
        onPress={() => setOpen((o) => !o)}
        style={({ focused }: { pressed: boolean; focused?: boolean }) => [styles.trigger, open && styles.triggerOpen, focused && styles.focused]}
      >
        <Text numberOfLines={1} style={styles.value}>
          {current?.label ?? '—'}
        </Text>
        <Text style={styles.chevron}>{open ? '▴' : '▾'}</Text>
      </Pressable>
      {open ? (
        <View role="radiogroup" aria-label={name} style={styles.menu}>
          {options.map((o) => {
            const selected = o.value === value;
            return (
              <Pressable
                key={o.value}
                role="radio"
                aria-checked={selected}
                aria-label={o.label}
                onPress={() => {
                  setOpen(false);
                  if (!selected) onChange(o.value);
                }}
                style={({ hovered }: { pressed: boolean; hovered?: boolean }) => [styles.option, selected && styles.optionSelected, hovered && !selected && styles.optionHover]}
              >
                <Text style={styles.mark}>{selected ? '✓' : ''}</Text>
                <Text style={selected ? styles.selectedText : undefined}>{o.label}</Text>
              </Pressable>
            );
          })}
        </View>
      ) : null}
    </View>
  );
}

const styles = StyleSheet.create({
  wrap: { gap: space.xs, minWidth: 0 },
  trigger: {
    minHeight: 44,
    flexDirection: 'row',
    alignItems: 'center',
    gap: space.sm,
    paddingHorizontal: space.md,
    borderWidth: 1,
    borderColor: colors.borderStrong,
    borderRadius: radii.md,
    backgroundColor: colors.surface,
  },
  triggerOpen: { borderColor: colors.primary },
  focused: { outlineColor: colors.focus, outlineWidth: 2, outlineStyle: 'solid' } as object,
  value: { flex: 1, fontFamily: fonts.medium, fontSize: 14 },
  chevron: { color: colors.textMuted },
  menu: { borderWidth: 1, borderColor: colors.border, borderRadius: radii.md, backgroundColor: colors.surface, paddingVertical: space.xs },
  option: { flexDirection: 'row', alignItems: 'center', gap: space.sm, minHeight: 36, paddingHorizontal: space.md },
  optionSelected: { backgroundColor: colors.primarySoft },
  optionHover: { backgroundColor: colors.surfaceAlt },
  mark: { width: 14, color: colors.primary },
  selectedText: { fontFamily: fonts.semibold, color: colors.primary },
});
