import type { Ref } from 'react';
import { ActivityIndicator, Pressable, StyleSheet, Text, type PressableProps, type StyleProp, type View, type ViewStyle } from 'react-native';
import { colors, fonts, radii, space } from '@/themes/tokens';

type Variant = 'primary' | 'secondary' | 'danger' | 'ghost';

export type ButtonProps = Omit<PressableProps, 'children' | 'style'> & {
  label: string;
  variant?: Variant;
  loading?: boolean;
  /** Spoken name when it differs from the visible label (e.g. "Remove Ana from the group"). */
  accessibilityLabel?: string;
  style?: StyleProp<ViewStyle>;
  compact?: boolean;
  /** The pressable itself (e.g. to give it focus back when a panel it opened closes). */
  ref?: Ref<View>;
};

export function Button({ label, variant = 'primary', loading, disabled, style, compact, accessibilityLabel, ...rest }: ButtonProps) {
  const off = disabled || loading;
  return (
    <Pressable
      role="button"
      aria-label={accessibilityLabel ?? label}
      aria-disabled={off || undefined}
      aria-busy={loading || undefined}
      disabled={off}
      style={({ pressed, hovered, focused }: { pressed: boolean; hovered?: boolean; focused?: boolean }) => [
        styles.base,
        compact && styles.compact,
        styles[variant],
        (pressed || hovered) && !off && styles.active,
        focused && styles.focused,
        off && styles.disabled,
        style,
      ]}
      {...rest}
    >
      {loading ? <ActivityIndicator size="small" color={variant === 'primary' || variant === 'danger' ? colors.primaryText : colors.primary} /> : null}
      <Text style={[styles.text, compact && styles.compactText, (variant === 'primary' || variant === 'danger') && styles.onFill, variant === 'ghost' && styles.ghostText]}>{label}</Text>
    </Pressable>
  );
}

const styles = StyleSheet.create({
  base: {
    minHeight: 44,
    paddingHorizontal: space.lg,
    borderRadius: radii.md,
    borderWidth: 1,
    borderColor: 'transparent',
    flexDirection: 'row',
    alignItems: 'center',
    justifyContent: 'center',
    gap: space.sm,
  },
  compact: { minHeight: 36, paddingHorizontal: space.md },
  primary: { backgroundColor: colors.primary },
  secondary: { backgroundColor: colors.surface, borderColor: colors.borderStrong },
  danger: { backgroundColor: colors.danger },
  ghost: { backgroundColor: 'transparent' },
  active: { opacity: 0.85 },
  focused: { outlineColor: colors.focus, outlineWidth: 2, outlineStyle: 'solid' } as ViewStyle,
  disabled: { opacity: 0.5 },
  text: { fontFamily: fonts.semibold, fontSize: 15, color: colors.text },
  compactText: { fontSize: 14 },
  onFill: { color: colors.primaryText },
  ghostText: { color: colors.primary },
});
