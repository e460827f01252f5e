import { useId } from 'react';
import { StyleSheet, TextInput, View, type TextInputProps } from 'react-native';
import { colors, fonts, radii, space } from '@/themes/tokens';
import { Text } from './text';

export type TextFieldProps = TextInputProps & { label: string; error?: string; hint?: string };

/** A labelled input; the label is the accessible name and the error is announced with it. */
export function TextField({ label, error, hint, style, ...rest }: TextFieldProps) {
  const id = useId();
  return (
    <View style={styles.wrap}>
      <Text variant="label" nativeID={`${id}-label`}>
        {label}
      </Text>
      <TextInput
        aria-label={label}
        aria-invalid={!!error || undefined}
        aria-describedby={error ? `${id}-error` : hint ? `${id}-hint` : undefined}
        placeholderTextColor={colors.textMuted}
        style={[styles.input, error ? styles.inputError : null, style]}
        {...rest}
      />
      {hint && !error ? (
        <Text variant="caption" nativeID={`${id}-hint`}>
          {hint}
        </Text>
      ) : null}
      {error ? (
        <Text variant="caption" nativeID={`${id}-error`} role="alert" style={styles.error}>
          {error}
        </Text>
      ) : null}
    </View>
  );
}

const styles = StyleSheet.create({
  wrap: { gap: space.xs },
  input: {
    minHeight: 44,
    borderWidth: 1,
    borderColor: colors.borderStrong,
    borderRadius: radii.md,
    paddingHorizontal: space.md,
    backgroundColor: colors.surface,
    color: colors.text,
    fontFamily: fonts.regular,
    fontSize: 15,
  },
  inputError: { borderColor: colors.danger },
  error: { color: colors.danger },
});
