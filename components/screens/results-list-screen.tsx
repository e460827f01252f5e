import { Link, useLocalSearchParams, useRouter, type Href } from 'expo-router';
import { useMemo } from 'react';
import { StyleSheet, View } from 'react-native';
import type { ResultListQuery, ResultSummary } from '@/shared/schemas/results';
import { useCurrentGroup } from '@/hooks/use-current-group';
import { useIsWide } from '@/hooks/use-layout';
import { useResults } from '@/hooks/use-results';
import { colors, fonts, space } from '@/themes/tokens';
import { permalinkPath } from '../results/format';
import { ResultFilterFields, useResultFilters, type FilterParams } from '../results/result-filters';
import { ResultList } from '../results/result-list';
import { Banner } from '../ui/banner';
import { Button } from '../ui/button';
import { EmptyState } from '../ui/empty-state';
import { errorMessage } from '../ui/form';
import { Loading } from '../ui/loading';
import { Pager } from '../ui/pager';
import { Screen } from '../ui/screen';
import { Select } from '../ui/select';
import { Text } from '../ui/text';

const PAGE_SIZE = 20;

export function ResultsListScreen() {
  const params = useLocalSearchParams<FilterParams>();
  const router = useRouter();
  const { group: current, groups, can } = useCurrentGroup();
  const wide = useIsWide();
  const filters = useResultFilters({ withState: true });

  // Without a choice, the list shows the group the user is working in.
  const groupFilter = params.group ?? current?.id ?? 'all';
  const query = useMemo<ResultListQuery>(
    () => ({ ...filters.query, groupId: groupFilter === 'all' ? undefined : groupFilter, pageSize: PAGE_SIZE }),
    // The query's parts are plain values from the address.
    // eslint-disable-next-line react-hooks/exhaustive-deps
    [JSON.stringify(filters.query), groupFilter],
  );
  const results = useResults(query, !filters.badEnergy);
  const { set, active: activeFilters, clear: clearFilters } = filters;

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
            <Button variant="secondary" label="Joint combination" accessibilityHint="Combines results computed by scans as independent channels in one likelihood" onPress={() => router.push('/combinations/new')} />
          </View>
        ) : undefined
      }
    >
      <ResultFilterFields
        filters={filters}
        wide={wide}
        searchLabel="Search results"
        leading={<Select label="Group" value={groupFilter} options={groupOptions} onChange={(v) => set({ group: v, page: undefined })} />}
      />

      {results.isPending && !filters.badEnergy ? <Loading label="Loading results…" /> : null}
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
  list: { gap: space.md },
  stale: { opacity: 0.6 },
  link: { color: colors.primary, fontFamily: fonts.semibold, fontSize: 15, lineHeight: 22, alignSelf: 'center' },
  captionLink: { color: colors.primary, fontFamily: fonts.semibold },
});
