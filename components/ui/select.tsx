import { useEffect, useRef, useState } from 'react';
import { Pressable, StyleSheet, View, type ViewProps } from 'react-native';
import { colors, fonts, radii, space } from '@/themes/tokens';
import { Text } from './text';

export type SelectOption<T extends string> = { value: T; label: string };

/** Keys as the web passes them (react-native-web forwards `onKeyDown` to the element). */
type KeyEvent = { key: string; preventDefault: () => void };
const keyHandler = (fn: (e: KeyEvent) => void) => ({ onKeyDown: fn }) as unknown as ViewProps;
type Focusable = { focus?: () => void } | null;

/**
 * A compact single choice: a button that shows the current value and opens the options below it
 * as radios (in the flow of the page, so it never hides behind a neighbour). Keyboard: arrow keys
 * on the button open the list and move through it; Home/End go to the ends, Enter or Space
 * chooses, Escape closes it and returns to the button (the WAI-ARIA radio group pattern).
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
  const [active, setActive] = useState(-1);
  const trigger = useRef<Focusable>(null);
  const items = useRef<Focusable[]>([]);
  const current = options.find((o) => o.value === value);
  const name = accessibilityLabel ?? label;
  const selectedIndex = Math.max(0, options.findIndex((o) => o.value === value));
  useEffect(() => {
    if (open && active >= 0) items.current[active]?.focus?.();
  }, [open, active]);
  const move = (e: KeyEvent) => {
    const last = options.length - 1;
    const from = active >= 0 ? active : selectedIndex;
    const to = { ArrowDown: from + 1, ArrowRight: from + 1, ArrowUp: from - 1, ArrowLeft: from - 1, Home: 0, End: last }[e.key];
    if (to !== undefined) {
      e.preventDefault();
      setOpen(true);
      setActive(open ? Math.min(last, Math.max(0, to)) : selectedIndex);
    } else if (e.key === 'Escape' && open) {
      e.preventDefault();
      setOpen(false);
      setActive(-1);
      trigger.current?.focus?.();
    }
  };
  return (
    <View style={styles.wrap}>
      {showLabel ? <Text variant="label">{label}</Text> : null}
      <Pressable
        ref={trigger as never}
        {...keyHandler(move)}
        role="button"
        aria-label={`${name}: ${current?.label ?? 'none'}`}
        aria-expanded={open}
        onPress={() => {
          setOpen((o) => !o);
          setActive(-1);
        }}
        style={({ focused }: { pressed: boolean; focused?: boolean }) => [styles.trigger, open && styles.triggerOpen, focused && styles.focused]}
      >
        <Text numberOfLines={1} style={styles.value}>
          {current?.label ?? '—'}
        </Text>
        <Text style={styles.chevron}>{open ? '▴' : '▾'}</Text>
      </Pressable>
      {open ? (
        <View role="radiogroup" aria-label={name} style={styles.menu} {...keyHandler(move)}>
          {options.map((o, i) => {
            const selected = o.value === value;
            return (
              <Pressable
                key={o.value}
                ref={((el: Focusable) => (items.current[i] = el)) as never}
                focusable={i === (active >= 0 ? active : selectedIndex)}
                role="radio"
                aria-checked={selected}
                aria-label={o.label}
                onPress={() => {
                  setOpen(false);
                  setActive(-1);
                  trigger.current?.focus?.();
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
