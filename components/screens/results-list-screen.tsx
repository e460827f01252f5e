import { Link, useLocalSearchParams, useRouter, type Href } from 'expo-router';
import { useEffect, useMemo, useState } from 'react';
import { StyleSheet, View } from 'react-native';
import { METHOD_LABELS, RESULT_METHODS, RESULT_STATES, type ResultListQuery, type ResultMethod, type ResultState, type ResultSummary } from '@/shared/schemas/results';
import { useCurrentGroup } from '@/hooks/use-current-group';
import { useDebounced } from '@/hooks/use-debounced';
import { useIsWide } from '@/hooks/use-layout';
import { useResults } from '@/hooks/use-results';
import { colors, fonts, space } from '@/themes/tokens';
import { permalinkPath, STATE_LABELS } from '../results/format';
import { ResultList } from '../results/result-list';
import { Banner } from '../ui/banner';
import { Button } from '../ui/button';
import { Card } from '../ui/card';
import { EmptyState } from '../ui/empty-state';
import { errorMessage } from '../ui/form';
import { Loading } from '../ui/loading';
import { Pager } from '../ui/pager';
import { Screen } from '../ui/screen';
import { Select } from '../ui/select';
import { Text } from '../ui/text';
import { TextField } from '../ui/text-field';

const PAGE_SIZE = 20;

/** Filters live in the address (?q=…&state=…), so going back to the list keeps them. */
type ListParams = { q?: string; group?: string; parameter?: string; sqrtS?: string; method?: string; state?: string; sort?: string; page?: string };

const SORTS = [
  { value: 'updated', label: 'Recently updated' },
  { value: 'title', label: 'Title (A–Z)' },
  { value: 'sqrtS', label: 'Energy (√s)' },
] as const;
type Sort = (typeof SORTS)[number]['value'];

const isMethod = (v: string | undefined): v is ResultMethod => RESULT_METHODS.includes(v as ResultMethod);
const isState = (v: string | undefined): v is ResultState => RESULT_STATES.includes(v as ResultState);
const isSort = (v: string | undefined): v is Sort => SORTS.some((s) => s.value === v);

export function ResultsListScreen() {
  const params = useLocalSearchParams<ListParams>();
  const router = useRouter();
  const { group: current, groups, can } = useCurrentGroup();
  const wide = useIsWide();
  const [showFilters, setShowFilters] = useState(false);

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

  // Without a choice, the list shows the group the user is working in.
  const groupFilter = params.group ?? current?.id ?? 'all';
  const method = isMethod(params.method) ? params.method : undefined;
  const state = isState(params.state) ? params.state : undefined;
  const sort: Sort = isSort(params.sort) ? params.sort : 'updated';
  const page = Math.max(1, Number(params.page) || 1);
  const energy = Number((params.sqrtS ?? '').replace(',', '.'));
  const badEnergy = !!params.sqrtS && !(energy > 0);

  const query = useMemo<ResultListQuery>(
    () => ({
      q: params.q || undefined,
      groupId: groupFilter === 'all' ? undefined : groupFilter,
      parameter: params.parameter || undefined,
      sqrtS: energy > 0 ? energy : undefined,
      method,
      state,
      sort,
      page,
      pageSize: PAGE_SIZE,
    }),
    [params.q, groupFilter, params.parameter, energy, method, state, sort, page],
  );
  const results = useResults(query, !badEnergy);
  const set = (patch: Partial<ListParams>) => router.setParams({ ...patch, page: patch.page });
  const activeFilters = [params.q, params.parameter, params.sqrtS, method, state].filter(Boolean).length;
  const clearFilters = () => {
    setSearch('');
    setParameter('');
    setSqrtS('');
    router.setParams({ q: undefined, parameter: undefined, sqrtS: undefined, method: undefined, state: undefined, page: undefined });
  };

  const myGroupIds = new Set(groups.map((g) => g.id));
  const hrefFor = (r: ResultSummary): Href =>
    (myGroupIds.has(r.groupId) ? `/groups/${r.groupId}/results/${r.id}` : permalinkPath(r.slug, r.version)) as Href;

  if (groups.length === 0) {
    return (
      <Screen title="Welcome to Bandwright">
        <EmptyState
          title="You are not in a group yet"
          message="Results and figures belong to groups. Create one for your analysis team, or ask a group's owner or curator to invite you."
          action={<Button label="Create a group" onPress={() => router.push('/groups/new')} />}
        />
        <Link href="/public" style={styles.link}>
          Browse public results
        </Link>
      </Screen>
    );
  }

  const groupOptions = [{ value: 'all', label: 'All my groups and public' }, ...groups.map((g) => ({ value: g.id, label: g.name }))];
  const filters = (
    <View style={[styles.filters, wide && styles.filtersWide]}>
      <View style={wide ? styles.filterCell : undefined}>
        <Select label="Group" value={groupFilter} options={groupOptions} onChange={(v) => set({ group: v, page: undefined })} />
      </View>
      <View style={wide ? styles.filterCell : undefined}>
        <TextField label="Parameter" value={parameter} onChangeText={setParameter} placeholder="e.g. m(Z′)" autoCapitalize="none" />
      </View>
      <View style={wide ? styles.filterCellSmall : undefined}>
        <TextField label="√s (TeV)" value={sqrtS} onChangeText={setSqrtS} inputMode="decimal" placeholder="e.g. 18" error={badEnergy ? 'Must be a positive number' : undefined} />
      </View>
      <View style={wide ? styles.filterCell : undefined}>
        <Select
          label="Method"
          value={method ?? 'any'}
          options={[{ value: 'any', label: 'Any method' }, ...RESULT_METHODS.map((m) => ({ value: m, label: METHOD_LABELS[m] }))]}
          onChange={(v) => set({ method: v === 'any' ? undefined : v, page: undefined })}
        />
      </View>
      <View style={wide ? styles.filterCell : undefined}>
        <Select
          label="State"
          value={state ?? 'any'}
          options={[{ value: 'any', label: 'Any state' }, ...RESULT_STATES.map((s) => ({ value: s, label: STATE_LABELS[s] }))]}
          onChange={(v) => set({ state: v === 'any' ? undefined : v, page: undefined })}
        />
      </View>
      <View style={wide ? styles.filterCell : undefined}>
        <Select label="Sort by" value={sort} options={[...SORTS]} onChange={(v) => set({ sort: v === 'updated' ? undefined : v, page: undefined })} />
      </View>
    </View>
  );

  const data = results.data;
  const empty = data && data.total === 0;
  return (
    <Screen
      title="Results"
      subtitle={groupFilter === 'all' ? 'All your groups and public results' : groups.find((g) => g.id === groupFilter)?.name}
      actions={
        can('result.write') ? (
          <View style={styles.actions}>
            <Button label="Upload a result" onPress={() => router.push('/results/new')} />
            <Button variant="secondary" label="Best-expected envelope" accessibilityHint="Builds one result from several: at each point the one expected to limit best" onPress={() => router.push('/envelopes/new')} />
          </View>
        ) : undefined
      }
    >
      <View style={styles.searchBox}>
        <TextField label="Search results" value={search} onChangeText={setSearch} placeholder="Title, model or reference" autoCapitalize="none" inputMode="search" />
        {wide ? (
          filters
        ) : (
          <>
            <Button
              compact
              variant="secondary"
              label={showFilters ? 'Hide filters' : activeFilters ? `Filters and sort (${activeFilters} on)` : 'Filters and sort'}
              aria-expanded={showFilters}
              onPress={() => setShowFilters((s) => !s)}
              style={styles.alignStart}
            />
            {showFilters ? <Card>{filters}</Card> : null}
          </>
        )}
      </View>

      {results.isPending && !badEnergy ? <Loading label="Loading results…" /> : null}
      {results.error ? <Banner tone="error" message={errorMessage(results.error)!} /> : null}
      {empty && activeFilters === 0 ? (
        <EmptyState
          title="No results yet"
          message={
            can('result.write')
              ? 'Upload a limit curve (CSV or a Bandwright JSON file) to start this group’s registry: observed and expected limits with their bands, versions and provenance.'
              : 'When analysts of this group add limit results, they will be listed here.'
          }
          action={can('result.write') ? <Button label="Upload the first result" onPress={() => router.push('/results/new')} /> : undefined}
        />
      ) : null}
      {empty && activeFilters > 0 ? (
        <EmptyState title="No results match these filters" message="Try other words or fewer filters." action={<Button variant="secondary" label="Clear filters" onPress={clearFilters} />} />
      ) : null}
      {data && data.items.length > 0 ? (
        <View style={[styles.list, results.isPlaceholderData && styles.stale]} aria-busy={results.isFetching || undefined}>
          <ResultList items={data.items} hrefFor={hrefFor} wide={wide} showGroup={groupFilter === 'all'} />
          <Pager page={data.page} pageSize={data.pageSize} total={data.total} onPage={(p) => set({ page: p > 1 ? String(p) : undefined })} />
        </View>
      ) : null}
      {!wide ? null : (
        <Text variant="caption">
          Public results of other groups open at their permanent link.{' '}
          <Link href="/public" style={styles.captionLink}>
            Browse all public results
          </Link>
        </Text>
      )}
    </Screen>
  );
}

const styles = StyleSheet.create({
  actions: { flexDirection: 'row', flexWrap: 'wrap', gap: space.sm },
  searchBox: { gap: space.md },
  filters: { gap: space.md },
  filtersWide: { flexDirection: 'row', flexWrap: 'wrap', alignItems: 'flex-start' },
  filterCell: { flexGrow: 1, flexBasis: 150, minWidth: 150 },
  filterCellSmall: { flexGrow: 0, flexBasis: 110, minWidth: 110 },
  alignStart: { alignSelf: 'flex-start' },
  list: { gap: space.md },
  stale: { opacity: 0.6 },
  link: { color: colors.primary, fontFamily: fonts.semibold, fontSize: 15, lineHeight: 22, alignSelf: 'center' },
  captionLink: { color: colors.primary, fontFamily: fonts.semibold },
});
