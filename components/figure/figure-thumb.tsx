import { useState } from 'react';
import { Image, StyleSheet, View } from 'react-native';
import { colors, radii, space } from '@/themes/tokens';
import { Text } from '../ui/text';

/** A figure's picture from one of its render addresses (SVG), framed at 4:3, with a plain fallback. */
export function FigureThumb({ uri, title }: { uri: string; title: string }) {
  const [failed, setFailed] = useState(false);
  return (
    <View style={styles.picture}>
      {failed ? (
        <Text variant="muted" style={styles.failed}>
          The picture could not be drawn; the downloads may still work.
        </Text>
      ) : (
        <Image source={{ uri }} resizeMode="contain" style={styles.image} accessibilityLabel={`Figure: ${title}`} onError={() => setFailed(true)} />
      )}
    </View>
  );
}

const styles = StyleSheet.create({
  picture: { aspectRatio: 4 / 3, backgroundColor: colors.surface, borderRadius: radii.md, borderWidth: 1, borderColor: colors.border, overflow: 'hidden', justifyContent: 'center' },
  image: { width: '100%', height: '100%' },
  failed: { padding: space.md, textAlign: 'center' },
});
