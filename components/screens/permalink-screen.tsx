import { Link, useLocalSearchParams, type Href } from 'expo-router';
import { StyleSheet } from 'react-native';
import { ApiError } from '@/shared/api-client';
import { api } from '@/hooks/api';
import { usePermalink } from '@/hooks/use-results';
import { useMe } from '@/hooks/use-session';
import { colors, fonts } from '@/themes/tokens';
import { PublicFrame } from '../nav/public-frame';
import { parseVersionSegment } from '../results/format';
import { ResultView } from '../results/result-view';
import { Banner } from '../ui/banner';
import { EmptyState } from '../ui/empty-state';
import { errorMessage } from '../ui/form';
import { Loading } from '../ui/loading';
import { Screen } from '../ui/screen';

/** `/r/<slug>/v<n>`: one published version, for anyone allowed to see it (everyone, when public). */
export function PermalinkScreen() {
  const params = useLocalSearchParams<{ slug: string; version: string }>();
  const slug = String(params.slug ?? '');
  const n = parseVersionSegment(String(params.version ?? ''));
  const me = useMe();
  const link = usePermalink(slug, n);
  const v = link.data;
  const missing = n === null || (link.error instanceof ApiError && [400, 401, 403, 404].includes(link.error.status));
  const member = !!v && !!me.data?.groups.some((g) => g.id === v.groupId);

  let body;
  if (missing) {
    body = (
      <Screen title="Result not found">
        <EmptyState
          title="Not found or not public"
          message={
            me.data
              ? 'There is no published version at this link that you may see. Check the address, or ask the group that published it.'
              : 'There is no public version at this link. If it belongs to your group, sign in to see it.'
          }
          action={
            me.data ? undefined : (
              <Link href={{ pathname: '/sign-in', params: { next: `/r/${slug}/${params.version ?? ''}` } }} style={styles.link}>
                Sign in
              </Link>
            )
          }
        />
      </Screen>
    );
  } else if (!v) {
    body = (
      <Screen title="Result">
        {link.error ? <Banner tone="error" message={errorMessage(link.error)!} /> : <Loading label="Loading the result…" />}
      </Screen>
    );
  } else {
    // Public versions download through the public routes, so the links work for anyone they are shared with.
    const downloads = v.isPublic
      ? { csv: api.publicResults.exportUrl(v.slug, v.version, 'csv'), json: api.publicResults.exportUrl(v.slug, v.version, 'json') }
      : { csv: api.results.exportUrl(v.groupId, v.resultId, v.version, 'csv'), json: api.results.exportUrl(v.groupId, v.resultId, v.version, 'json') };
    body = (
      <Screen title={v.meta.title} subtitle={v.meta.model || undefined}>
        <ResultView
          version={v}
          downloads={downloads}
          top={
            member ? (
              <Link href={`/groups/${v.groupId}/results/${v.resultId}?v=${v.version}` as Href} style={styles.link}>
                Open in your group (versions and actions)
              </Link>
            ) : undefined
          }
        />
      </Screen>
    );
  }
  return <PublicFrame>{body}</PublicFrame>;
}

const styles = StyleSheet.create({
  link: { color: colors.primary, fontFamily: fonts.semibold, fontSize: 15, lineHeight: 22 },
});
