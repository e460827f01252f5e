import { useLocalSearchParams, useRouter, type Href } from 'expo-router';
import { useEffect, useState } from 'react';
import { StyleSheet, View } from 'react-native';
import { useDebounced } from '@/hooks/use-debounced';
import { useIsWide } from '@/hooks/use-layout';
import { usePublicResults } from '@/hooks/use-results';
import { space } from '@/themes/tokens';
import { PublicFrame } from '../nav/public-frame';
import { permalinkPath } from '../results/format';
import { ResultList } from '../results/result-list';
import { Banner } from '../ui/banner';
import { EmptyState } from '../ui/empty-state';
import { errorMessage } from '../ui/form';
import { Loading } from '../ui/loading';
import { Pager } from '../ui/pager';
import { Screen } from '../ui/screen';
import { TextField } from '../ui/text-field';

const PAGE_SIZE = 20;

/** Published public results of every group, for anyone; each opens at its permanent link. */
export function PublicResultsScreen() {
  const params = useLocalSearchParams<{ q?: string; page?: string }>();
  const router = useRouter();
  const wide = useIsWide();
  const [search, setSearch] = useState(params.q ?? '');
  const q = useDebounced(search.trim(), 350);
  useEffect(() => {
    if (q !== (params.q ?? '')) router.setParams({ q: q || undefined, page: undefined });
    // The settled text drives the address, not the other way round.
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, [q]);
  const page = Math.max(1, Number(params.page) || 1);
  const list = usePublicResults({ q: params.q || undefined, page, pageSize: PAGE_SIZE });
  const data = list.data;
  return (
    <PublicFrame>
      <Screen title="Public results" subtitle="Published upper limits that their groups made public. Open one for its curve, derived numbers and downloads.">
        <View>
          <TextField label="Search public results" value={search} onChangeText={setSearch} placeholder="Title, model or reference" autoCapitalize="none" inputMode="search" />
        </View>
        {list.isPending ? <Loading label="Loading public results…" /> : null}
        {list.error ? <Banner tone="error" message={errorMessage(list.error)!} /> : null}
        {data && data.total === 0 ? (
          params.q ? (
            <EmptyState title="No public results match" message="Try other words: titles, models and references are searched." />
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
