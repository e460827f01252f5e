import { useLocalSearchParams, useRouter } from 'expo-router';
import { useEffect, useState, type ReactNode } from 'react';
import { StyleSheet, View } from 'react-native';
import { METHOD_LABELS, RESULT_METHODS, RESULT_STATES, type ResultListQuery, type ResultMethod, type ResultState } from '@/shared/schemas/results';
import { useDebounced } from '@/hooks/use-debounced';
import { space } from '@/themes/tokens';
import { Button } from '../ui/button';
import { Card } from '../ui/card';
import { Select } from '../ui/select';
import { TextField } from '../ui/text-field';
import { STATE_LABELS } from './format';

/**
 * The filters of a results list (search, parameter, √s, method, state, sort), kept in the address
 * (?q=…&method=…) so going back to the list keeps them. One definition for the signed-in list and
 * the public list (which has no state choice: it shows published versions only).
 */
export type FilterParams = { q?: string; group?: string; parameter?: string; sqrtS?: string; method?: string; state?: string; sort?: string; page?: string };

export const RESULT_SORT_OPTIONS = [
  { value: 'updated', label: 'Recently updated' },
  { value: 'title', label: 'Title (A–Z)' },
  { value: 'sqrtS', label: 'Energy (√s)' },
] as const;
type Sort = (typeof RESULT_SORT_OPTIONS)[number]['value'];

const isMethod = (v: string | undefined): v is ResultMethod => RESULT_METHODS.includes(v as ResultMethod);
const isState = (v: string | undefined): v is ResultState => RESULT_STATES.includes(v as ResultState);
const isSort = (v: string | undefined): v is Sort => RESULT_SORT_OPTIONS.some((s) => s.value === v);

export type ResultFilters = ReturnType<typeof useResultFilters>;

/** The list's filters from the address, the typed fields (debounced into the address) and the query they make. */
export function useResultFilters(opts: { withState: boolean }) {
  const params = useLocalSearchParams<FilterParams>();
  const router = useRouter();
  // Typed text settles for a moment before it becomes a query (one request per pause, not per key).
  const [search, setSearch] = useState(params.q ?? '');
  const [parameter, setParameter] = useState(params.parameter ?? '');
  const [sqrtS, setSqrtS] = useState(params.sqrtS ?? '');
  const typed = useDebounced({ q: search.trim(), parameter: parameter.trim(), sqrtS: sqrtS.trim() }, 350);
  useEffect(() => {
    if (typed.q !== (params.q ?? '') || typed.parameter !== (params.parameter ?? '') || typed.sqrtS !== (params.sqrtS ?? '')) {
      router.setParams({ q: typed.q || undefined, parameter: typed.parameter || undefined, sqrtS: typed.sqrtS || undefined, page: undefined });
    }
    // Only the settled text drives this; the address is read, not watched.
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, [typed.q, typed.parameter, typed.sqrtS]);

  const method = isMethod(params.method) ? params.method : undefined;
  const state = opts.withState && isState(params.state) ? params.state : undefined;
  const sort: Sort = isSort(params.sort) ? params.sort : 'updated';
  const page = Math.max(1, Number(params.page) || 1);
  const energy = Number((params.sqrtS ?? '').replace(',', '.'));
  const badEnergy = !!params.sqrtS && !(energy > 0);
  const query: Omit<ResultListQuery, 'groupId'> = {
    q: params.q || undefined,
    parameter: params.parameter || undefined,
    sqrtS: energy > 0 ? energy : undefined,
    method,
    ...(opts.withState ? { state } : {}),
    sort,
    page,
  };
  const set = (patch: Partial<FilterParams>) => router.setParams({ ...patch, page: patch.page });
  const active = [params.q, params.parameter, params.sqrtS, method, state].filter(Boolean).length;
  const clear = () => {
    setSearch('');
    setParameter('');
    setSqrtS('');
    router.setParams({ q: undefined, parameter: undefined, sqrtS: undefined, method: undefined, state: undefined, page: undefined });
  };
  return { params, query, page, badEnergy, active, set, clear, withState: opts.withState, fields: { search, setSearch, parameter, setParameter, sqrtS, setSqrtS }, method, state, sort };
}

/**
 * The search box and the filter fields: in one row on wide screens, folded behind a "Filters and
 * sort" button on phones. `leading` goes first among the filters (the signed-in list's group choice).
 */
export function ResultFilterFields({ filters: f, wide, searchLabel, leading }: { filters: ResultFilters; wide: boolean; searchLabel: string; leading?: ReactNode }) {
  const [open, setOpen] = useState(false);
  const cells = (
    <View style={[styles.filters, wide && styles.filtersWide]}>
      {leading ? <View style={wide ? styles.filterCell : undefined}>{leading}</View> : null}
      <View style={wide ? styles.filterCell : undefined}>
        <TextField label="Parameter" value={f.fields.parameter} onChangeText={f.fields.setParameter} placeholder="e.g. m(Z′)" autoCapitalize="none" />
      </View>
      <View style={wide ? styles.filterCellSmall : undefined}>
        <TextField label="√s (TeV)" value={f.fields.sqrtS} onChangeText={f.fields.setSqrtS} inputMode="decimal" placeholder="e.g. 18" error={f.badEnergy ? 'Must be a positive number' : undefined} />
      </View>
      <View style={wide ? styles.filterCell : undefined}>
        <Select
          label="Method"
          value={f.method ?? 'any'}
          options={[{ value: 'any', label: 'Any method' }, ...RESULT_METHODS.map((m) => ({ value: m, label: METHOD_LABELS[m] }))]}
          onChange={(v) => f.set({ method: v === 'any' ? undefined : v, page: undefined })}
        />
      </View>
      {f.withState ? (
        <View style={wide ? styles.filterCell : undefined}>
          <Select
            label="State"
            value={f.state ?? 'any'}
            options={[{ value: 'any', label: 'Any state' }, ...RESULT_STATES.map((s) => ({ value: s, label: STATE_LABELS[s] }))]}
            onChange={(v) => f.set({ state: v === 'any' ? undefined : v, page: undefined })}
          />
        </View>
      ) : null}
      <View style={wide ? styles.filterCell : undefined}>
        <Select label="Sort by" value={f.sort} options={[...RESULT_SORT_OPTIONS]} onChange={(v) => f.set({ sort: v === 'updated' ? undefined : v, page: undefined })} />
      </View>
    </View>
  );
  return (
    <View style={styles.searchBox}>
      <TextField label={searchLabel} value={f.fields.search} onChangeText={f.fields.setSearch} placeholder="Title, model or reference" autoCapitalize="none" inputMode="search" />
      {wide ? (
        cells
      ) : (
        <>
          <Button
            compact
            variant="secondary"
            label={open ? 'Hide filters' : f.active ? `Filters and sort (${f.active} on)` : 'Filters and sort'}
            aria-expanded={open}
            onPress={() => setOpen((s) => !s)}
            style={styles.alignStart}
          />
          {open ? <Card>{cells}</Card> : null}
        </>
      )}
    </View>
  );
}

const styles = StyleSheet.create({
  searchBox: { gap: space.md },
  filters: { gap: space.md },
  filtersWide: { flexDirection: 'row', flexWrap: 'wrap', alignItems: 'flex-start' },
  filterCell: { flexGrow: 1, flexBasis: 150, minWidth: 150 },
  filterCellSmall: { flexGrow: 0, flexBasis: 110, minWidth: 110 },
  alignStart: { alignSelf: 'flex-start' },
});
