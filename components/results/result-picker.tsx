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
import { ParametersBadge } from './state-badge';

/**
 * Search what a group may build on — its own results in any state, other groups' public ones at
 * their newest published version (the server's `pinning` reader) — and pick one. Used by the
 * figure composer (layers: only the sort its kind draws, `parameters`, saying how many others
 * match) and the envelope builder (inputs).
 */
/** The picker's note for a builder that takes curves only: "2 two-parameter results are not shown: an envelope takes curves." */
export const curvesOnlyNote =
  (why: string) =>
  (count: number): string | null =>
    count > 0 ? `${count} two-parameter ${count === 1 ? 'result is' : 'results are'} not shown: ${why}.` : null;

export function ResultPicker({
  groupId,
  onAdd,
  label = 'Find results to add',
  actionLabel = (r) => `Add ${r.title} as a layer`,
  isAdded,
  parameters,
  hiddenNote,
}: {
  groupId: string;
  /** Called with the row picked (its newest version the group may use). */
  onAdd: (r: ResultSummary) => void;
  label?: string;
  /** The screen-reader name of a row's button. */
  actionLabel?: (r: ResultSummary) => string;
  /** Rows already picked show a disabled button. */
  isAdded?: (resultId: string, version: number) => boolean;
  /** List only results over this many parameters (the sort the caller can take); the others are counted, not shown. */
  parameters?: 1 | 2;
  /** The note on how many results of the other sort match and are not shown (null: none). */
  hiddenNote?: (count: number) => string | null;
}) {
  const [q, setQ] = useState('');
  const query = useDebounced(q, 300);
  const found = useQuery({ queryKey: ['results', 'picker', groupId, query, parameters ?? 'any'], queryFn: () => api.results.listPinnable(groupId, { q: query || undefined, pageSize: 8, parameters }) });
  // How many matches of the other sort are left out: one row's page, for its total only.
  const other = parameters === undefined ? undefined : parameters === 1 ? 2 : 1;
  const left = useQuery({
    queryKey: ['results', 'picker', groupId, query, other ?? 'none', 'count'],
    queryFn: () => api.results.listPinnable(groupId, { q: query || undefined, pageSize: 1, parameters: other }),
    enabled: other !== undefined,
  });
  const note = other !== undefined && left.data ? (hiddenNote?.(left.data.total) ?? null) : null;
  return (
    <View style={styles.picker}>
      <TextField label={label} value={q} onChangeText={setQ} placeholder="Title, model or reference" />
      {found.isPending ? <Loading label="Searching…" /> : null}
      {found.error ? <Banner tone="error" message={errorMessage(found.error)!} /> : null}
      {found.data?.items.length === 0 ? <Text variant="muted">No result matches.</Text> : null}
      {note ? <Text variant="caption">{note}</Text> : null}
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
              <ParametersBadge result={r} />
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
