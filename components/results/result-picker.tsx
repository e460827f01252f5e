import { useState } from 'react';
import { StyleSheet, View } from 'react-native';
import { useQuery } from '@tanstack/react-query';
import type { ResultSummary } from '@/shared/schemas/results';
import { api } from '@/hooks/api';
import { useDebounced } from '@/hooks/use-debounced';
import { colors, space } from '@/themes/tokens';
import { Banner } from '../ui/banner';
import { Button } from '../ui/button';
import { errorMessage } from '../ui/form';
import { Loading } from '../ui/loading';
import { Text } from '../ui/text';
import { TextField } from '../ui/text-field';

/**
 * Search what a group may build on — its own results in any state, other groups' public ones at
 * their newest published version (the server's `pinning` reader) — and pick one. Used by the
 * figure composer (layers) and the envelope builder (inputs).
 */
export function ResultPicker({
  groupId,
  onAdd,
  label = 'Find results to add',
  actionLabel = (r) => `Add ${r.title} as a layer`,
  isAdded,
}: {
  groupId: string;
  /** Called with the row picked (its newest version the group may use). */
  onAdd: (r: ResultSummary) => void;
  label?: string;
  /** The screen-reader name of a row's button. */
  actionLabel?: (r: ResultSummary) => string;
  /** Rows already picked show a disabled button. */
  isAdded?: (resultId: string, version: number) => boolean;
}) {
  const [q, setQ] = useState('');
  const query = useDebounced(q, 300);
  const found = useQuery({ queryKey: ['results', 'picker', groupId, query], queryFn: () => api.results.listPinnable(groupId, { q: query || undefined, pageSize: 8 }) });
  return (
    <View style={styles.picker}>
      <TextField label={label} value={q} onChangeText={setQ} placeholder="Title, model or reference" />
      {found.isPending ? <Loading label="Searching…" /> : null}
      {found.error ? <Banner tone="error" message={errorMessage(found.error)!} /> : null}
      {found.data?.items.length === 0 ? <Text variant="muted">No result matches.</Text> : null}
      {found.data?.items.map((r) => {
        const added = isAdded?.(r.id, r.version) ?? false;
        return (
          <View key={r.id} style={styles.found}>
            <View style={styles.grow}>
              <Text variant="label" numberOfLines={2}>
                {r.title}
              </Text>
              <Text variant="caption">
                v{r.version} · {r.state} · {r.groupName}
              </Text>
            </View>
            <Button compact variant="secondary" label={added ? 'Added' : 'Add'} disabled={added} accessibilityLabel={actionLabel(r)} onPress={() => onAdd(r)} />
          </View>
        );
      })}
    </View>
  );
}

const styles = StyleSheet.create({
  picker: { gap: space.sm, borderTopWidth: 1, borderTopColor: colors.border, paddingTop: space.md },
  found: { flexDirection: 'row', alignItems: 'center', gap: space.sm },
  grow: { flex: 1, minWidth: 0 },
});
