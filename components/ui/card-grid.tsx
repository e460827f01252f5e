import { Children, useState, type ReactNode } from 'react';
import { StyleSheet, View } from 'react-native';
import { space } from '@/themes/tokens';

/**
 * Cards in as many equal columns (at most `maxColumns`) of at least `minWidth` px as the grid's own
 * width allows — measured, so side navigation and page margins count. One column on phones.
 */
export function CardGrid({ label, children, minWidth = 300, maxColumns = 3 }: { label: string; children: ReactNode; minWidth?: number; maxColumns?: number }) {
  const [width, setWidth] = useState(0);
  const columns = Math.max(1, Math.min(maxColumns, Math.floor((width + space.md) / (minWidth + space.md))));
  const itemWidth = width > 0 ? (width - space.md * (columns - 1)) / columns : undefined;
  return (
    <View style={styles.grid} role="list" aria-label={label} onLayout={(e) => setWidth(e.nativeEvent.layout.width)}>
      {Children.map(children, (child) => (
        <View role="listitem" style={{ width: itemWidth ?? '100%' }}>
          {child}
        </View>
      ))}
    </View>
  );
}

const styles = StyleSheet.create({ grid: { flexDirection: 'row', flexWrap: 'wrap', gap: space.md } });
