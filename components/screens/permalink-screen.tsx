import type { UseQueryResult } from '@tanstack/react-query';
import { Link, useLocalSearchParams, type Href } from 'expo-router';
import { StyleSheet, View } from 'react-native';
import { ApiError } from '@/shared/api-client';
import type { ResultVersion } from '@/shared/schemas/results';
import { api } from '@/hooks/api';
import { useLatestPermalink, usePermalink } from '@/hooks/use-results';
import { useMe } from '@/hooks/use-session';
import { colors, fonts, space } from '@/themes/tokens';
import { CiteControl } from '../cite/cite-control';
import { PublicFrame } from '../nav/public-frame';
import { parseVersionSegment, permalinkPath } from '../results/format';
import { absoluteUrl, ResultView } from '../results/result-view';
import { Banner } from '../ui/banner';
import { EmptyState } from '../ui/empty-state';
import { errorMessage } from '../ui/form';
import { Loading } from '../ui/loading';
import { Screen } from '../ui/screen';
import { Text } from '../ui/text';

/** `/r/<slug>/v<n>`: one published version, for anyone allowed to see it (everyone, when public). */
export function PermalinkScreen() {
  const params = useLocalSearchParams<{ slug: string; version: string }>();
  const slug = String(params.slug ?? '');
  const n = parseVersionSegment(String(params.version ?? ''));
  const link = usePermalink(slug, n);
  return <PermalinkPage path={`/r/${slug}/${params.version ?? ''}`} query={link} invalid={n === null} />;
}

/** `/r/<slug>`: the result's current version, i.e. the newest published one the reader may see. */
export function CurrentPermalinkScreen() {
  const params = useLocalSearchParams<{ slug: string }>();
  const slug = String(params.slug ?? '');
  const link = useLatestPermalink(slug);
  return <PermalinkPage path={`/r/${slug}`} query={link} current />;
}

/**
 * The page of a permanent link, current or versioned: the version (the same view as the group's
 * result page), a notice when a newer version is published, the citation, and what to say when
 * there is nothing to show (not found, not public, or nothing published yet).
 */
function PermalinkPage({ path, query, invalid = false, current = false }: { path: string; query: UseQueryResult<ResultVersion>; invalid?: boolean; current?: boolean }) {
  const me = useMe();
  const v = query.data;
  const err = query.error instanceof ApiError ? query.error : null;
  const notPublished = err?.code === 'not_published';
  const missing = invalid || (!!err && !notPublished && [400, 401, 403, 404].includes(err.status));
  const member = !!v && !!me.data?.groups.some((g) => g.id === v.groupId);

  let body;
  if (notPublished) {
    body = (
      <Screen title="Not published yet">
        <EmptyState
          title="No published version"
          message="This result has no published version yet: so far it has only drafts, or every published version was retracted. Its group publishes a version when it is ready."
        />
      </Screen>
    );
  } else if (missing) {
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
              <Link href={{ pathname: '/sign-in', params: { next: path } }} style={styles.link}>
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
        {query.error ? <Banner tone="error" message={errorMessage(query.error)!} /> : <Loading label="Loading the result…" />}
      </Screen>
    );
  } else {
    // Public versions download through the public routes, so the links work for anyone they are shared with.
    const downloads = v.isPublic
      ? {
          csv: api.publicResults.exportUrl(v.slug, v.version, 'csv'),
          json: api.publicResults.exportUrl(v.slug, v.version, 'json'),
          ...(v.plane ? { contours: { csv: api.publicResults.contoursUrl(v.slug, v.version, 'csv'), json: api.publicResults.contoursUrl(v.slug, v.version, 'json') } } : {}),
        }
      : {
          csv: api.results.exportUrl(v.groupId, v.resultId, v.version, 'csv'),
          json: api.results.exportUrl(v.groupId, v.resultId, v.version, 'json'),
          ...(v.plane ? { contours: { csv: api.results.contoursUrl(v.groupId, v.resultId, v.version, 'csv'), json: api.results.contoursUrl(v.groupId, v.resultId, v.version, 'json') } } : {}),
        };
    const versionPath = permalinkPath(v.slug, v.version);
    body = (
      <Screen title={v.meta.title} subtitle={v.meta.model || undefined}>
        <ResultView
          version={v}
          downloads={downloads}
          top={
            <View style={styles.top}>
              {current ? (
                <View style={styles.current} role="note" aria-label="About this address">
                  <Text>
                    This address always opens the current version of the result; today that is version {v.version}. To point at exactly this version, use its own
                    permanent link:
                  </Text>
                  <Link href={versionPath as Href} style={styles.link} aria-label={`Permanent link of version ${v.version}`}>
                    {versionPath}
                  </Link>
                </View>
              ) : null}
              {member ? (
                <Link href={`/groups/${v.groupId}/results/${v.resultId}?v=${v.version}` as Href} style={styles.link}>
                  Open in your group (versions and actions)
                </Link>
              ) : null}
              <CiteControl
                what={`version ${v.version} of this result`}
                source={{
                  kind: 'result',
                  title: v.meta.title,
                  groupName: v.groupName,
                  version: v.version,
                  url: absoluteUrl(v.permalink ?? versionPath),
                  date: v.publishedAt ?? v.createdAt,
                  id: v.slug,
                  note: v.meta.reference || undefined,
                }}
              />
            </View>
          }
        />
      </Screen>
    );
  }
  return <PublicFrame>{body}</PublicFrame>;
}

const styles = StyleSheet.create({
  top: { gap: space.md },
  current: { gap: space.xs },
  link: { color: colors.primary, fontFamily: fonts.semibold, fontSize: 15, lineHeight: 22 },
});
