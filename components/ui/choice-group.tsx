import { useRef, useState } from 'react';
import { Pressable, StyleSheet, View, type ViewProps } from 'react-native';
import { colors, fonts, radii, space } from '@/themes/tokens';
import { Text } from './text';

export type Choice<T extends string> = { value: T; label: string; disabled?: boolean };

/** Keys as the web passes them (react-native-web forwards `onKeyDown` to the element). */
type KeyEvent = { key: string; preventDefault: () => void };
type Focusable = { focus?: () => void } | null;

/**
 * A row of radio chips (keyboard and screen-reader friendly alternative to a select). One chip is
 * in the tab order (the chosen one); the arrow keys, Home and End move among the enabled chips and
 * Enter or Space chooses the focused one. Choosing is left to Enter/Space rather than done on
 * every arrow press because a choice here often acts at once (a member's role is saved).
 */
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
  const items = useRef<Focusable[]>([]);
  const [focused, setFocused] = useState(-1);
  const enabled = choices.flatMap((c, i) => (c.disabled ? [] : [i]));
  const selectedIndex = choices.findIndex((c) => c.value === value);
  const tabStop = focused >= 0 ? focused : selectedIndex >= 0 && !choices[selectedIndex]?.disabled ? selectedIndex : (enabled[0] ?? 0);
  const onKeyDown = (e: KeyEvent) => {
    if (!enabled.length) return;
    const at = Math.max(0, enabled.indexOf(tabStop));
    const next = { ArrowRight: at + 1, ArrowDown: at + 1, ArrowLeft: at - 1, ArrowUp: at - 1, Home: 0, End: enabled.length - 1 }[e.key];
    if (next === undefined) return;
    e.preventDefault();
    const i = enabled[(next + enabled.length) % enabled.length]!;
    setFocused(i);
    items.current[i]?.focus?.();
  };
  return (
    <View role="radiogroup" aria-label={label} style={styles.row} {...({ onKeyDown } as unknown as ViewProps)}>
      {choices.map((c, i) => {
        const selected = c.value === value;
        return (
          <Pressable
            key={c.value}
            ref={((el: Focusable) => (items.current[i] = el)) as never}
            focusable={i === tabStop}
            onFocus={() => setFocused(i)}
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
