import { StyleSheet, Text } from 'react-native';

/**
 * A letter with a hat (μ̂, θ̂) that stays on its letter: the combining circumflex (U+0302) is
 * placed by the font, and the app's fonts put it beside Greek letters, so the hat is drawn as
 * its own glyph centred over the letter. Read by screen readers as "μ-hat".
 */
export function Hatted({ letter }: { letter: string }) {
  return (
    <Text accessibilityLabel={`${letter}-hat`} style={styles.wrap}>
      {letter}
      <Text aria-hidden style={styles.hat}>
        ˆ
      </Text>
    </Text>
  );
}

const styles = StyleSheet.create({
  wrap: { position: 'relative' },
  hat: { position: 'absolute', left: 0, right: 0, top: '-30%', textAlign: 'center', lineHeight: undefined },
});
