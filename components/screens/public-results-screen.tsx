import { useRouter, type Href } from 'expo-router';
import { StyleSheet, View } from 'react-native';
import { useIsWide } from '@/hooks/use-layout';
import { usePublicResults } from '@/hooks/use-results';
import { space } from '@/themes/tokens';
import { PublicFrame } from '../nav/public-frame';
import { permalinkPath } from '../results/format';
import { ResultFilterFields, useResultFilters } from '../results/result-filters';
import { ResultList } from '../results/result-list';
import { Banner } from '../ui/banner';
import { Button } from '../ui/button';
import { EmptyState } from '../ui/empty-state';
import { errorMessage } from '../ui/form';
import { Loading } from '../ui/loading';
import { Pager } from '../ui/pager';
import { Screen } from '../ui/screen';

const PAGE_SIZE = 20;

/** Published public results of every group, for anyone; each opens at its permanent link. */
export function PublicResultsScreen() {
  const router = useRouter();
  const wide = useIsWide();
  const filters = useResultFilters({ withState: false });
  const { state: _state, ...query } = filters.query;
  const list = usePublicResults({ ...query, pageSize: PAGE_SIZE }, !filters.badEnergy);
  const data = list.data;
  return (
    <PublicFrame>
      <Screen title="Public results" subtitle="Published upper limits that their groups made public. Open one for its curve, derived numbers and downloads.">
        <ResultFilterFields filters={filters} wide={wide} searchLabel="Search public results" />
        {list.isPending && !filters.badEnergy ? <Loading label="Loading public results…" /> : null}
        {list.error ? <Banner tone="error" message={errorMessage(list.error)!} /> : null}
        {data && data.total === 0 ? (
          filters.active ? (
            <EmptyState
              title="No public results match"
              message="Try other words or fewer filters: titles, models and references are searched."
              action={<Button variant="secondary" label="Clear filters" onPress={filters.clear} />}
            />
          ) : (
            <EmptyState title="No public results yet" message="When a group publishes a result and makes it public, it appears here." />
          )
        ) : null}
        {data && data.items.length > 0 ? (
          <View style={[styles.list, list.isPlaceholderData && styles.stale]}>
            <ResultList items={data.items} hrefFor={(r) => permalinkPath(r.slug, r.version) as Href} wide={wide} />
            <Pager page={data.page} pageSize={data.pageSize} total={data.total} onPage={(p) => router.setParams({ page: p > 1 ? String(p) : undefined })} />
          </View>
        ) : null}
      </Screen>
    </PublicFrame>
  );
}

const styles = StyleSheet.create({
  list: { gap: space.md },
  stale: { opacity: 0.6 },
});
