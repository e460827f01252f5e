import { StyleSheet, Text as RNText, type TextProps } from 'react-native';
import { colors, fonts, type as t } from '@/themes/tokens';

type Variant = 'body' | 'label' | 'caption' | 'title' | 'heading' | 'muted';

/** Text in the app's type scale. Headings get the header role for screen readers. */
export function Text({ variant = 'body', style, ...rest }: TextProps & { variant?: Variant }) {
  const level = variant === 'heading' ? 1 : variant === 'title' ? 2 : undefined;
  return <RNText role={level ? 'heading' : undefined} aria-level={level} style={[styles.base, styles[variant], style]} {...rest} />;
}

const styles = StyleSheet.create({
  base: { color: colors.text, fontFamily: fonts.regular },
  body: { ...t.body },
  label: { ...t.label, fontFamily: fonts.semibold },
  caption: { ...t.caption, color: colors.textMuted },
  muted: { ...t.body, color: colors.textMuted },
  title: { ...t.title, fontFamily: fonts.semibold },
  heading: { ...t.heading, fontFamily: fonts.bold },
});
