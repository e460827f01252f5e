import { StyleSheet, View } from 'react-native';
import { space } from '@/themes/tokens';
import { Button } from './button';
import { Text } from './text';

/** "Showing 21–40 of 57" with previous / next page buttons. */
export function Pager({ page, pageSize, total, onPage, noun = 'results' }: { page: number; pageSize: number; total: number; onPage: (p: number) => void; noun?: string }) {
  if (total === 0) return null;
  const pages = Math.max(1, Math.ceil(total / pageSize));
  const first = (page - 1) * pageSize + 1;
  const last = Math.min(total, page * pageSize);
  return (
    <View style={styles.row} role="navigation" aria-label="Pages">
      <Text variant="muted" role="status">
        {pages === 1 ? `${total} ${total === 1 ? noun.replace(/s$/, '') : noun}` : `Showing ${first}–${last} of ${total} ${noun}`}
      </Text>
      {pages > 1 ? (
        <View style={styles.buttons}>
          <Button compact variant="secondary" label="Previous page" disabled={page <= 1} onPress={() => onPage(page - 1)} />
          <Text variant="caption">
            Page {page} of {pages}
          </Text>
          <Button compact variant="secondary" label="Next page" disabled={page >= pages} onPress={() => onPage(page + 1)} />
        </View>
      ) : null}
    </View>
  );
}

const styles = StyleSheet.create({
  row: { flexDirection: 'row', flexWrap: 'wrap', alignItems: 'center', justifyContent: 'space-between', gap: space.md },
  buttons: { flexDirection: 'row', alignItems: 'center', gap: space.sm },
});
