import { Linking, Platform, StyleSheet, Text as RNText, type TextProps } from 'react-native';
import { colors, fonts } from '@/themes/tokens';

/**
 * A plain link to a URL outside the app's routes (downloads from the API, the API reference): a
 * real `<a href>` on the web, so it can be opened, saved or copied like any link. `newTab` opens it
 * in a new tab (without giving the page a handle on this one).
 */
export function Anchor({ href, label, download, newTab, children, style }: { href: string; label?: string; download?: boolean; newTab?: boolean; children: string; style?: TextProps['style'] }) {
  // react-native-web renders Text with href as an anchor; React Native's types do not know the prop.
  const hrefAttrs = download ? { download: true } : newTab ? { target: '_blank', rel: 'noopener noreferrer' } : undefined;
  const web = Platform.OS === 'web' ? ({ href, hrefAttrs } as unknown as TextProps) : {};
  return (
    <RNText role="link" aria-label={label ?? children} style={[styles.link, style]} {...web} onPress={Platform.OS === 'web' ? undefined : () => void Linking.openURL(href)}>
      {children}
    </RNText>
  );
}

const styles = StyleSheet.create({ link: { color: colors.primary, fontFamily: fonts.semibold, fontSize: 15, lineHeight: 22, textDecorationLine: 'underline' } });
