import { Link, useLocalSearchParams, useRouter, type Href } from 'expo-router';
import { useEffect, useState } from 'react';
import { StyleSheet, View } from 'react-native';
import { useDebounced } from '@/hooks/use-debounced';
import { usePublicFigures } from '@/hooks/use-figures';
import { api } from '@/hooks/api';
import { FIGURE_THEMES, type FigureTheme } from '@/shared/schemas/figures';
import type { PublicFigureSummary } from '@/shared/schemas/figure-views';
import { colors, space } from '@/themes/tokens';
import { FigureThumb } from '../figure/figure-thumb';
import { THEME_LABELS } from '../figure/style-panel';
import { PublicFrame } from '../nav/public-frame';
import { formatDate } from '../results/format';
import { Anchor } from '../ui/anchor';
import { Banner } from '../ui/banner';
import { Card } from '../ui/card';
import { CardGrid } from '../ui/card-grid';
import { ChoiceGroup } from '../ui/choice-group';
import { EmptyState } from '../ui/empty-state';
import { errorMessage } from '../ui/form';
import { Loading } from '../ui/loading';
import { Pager } from '../ui/pager';
import { Screen } from '../ui/screen';
import { Text } from '../ui/text';
import { TextField } from '../ui/text-field';

const PAGE_SIZE = 12;
type ThemeFilter = FigureTheme | 'all';

/**
 * Figures that their groups made public, for anyone: a picture of each (the server's SVG render,
 * public variant) with its downloads. Search and theme live in the address, so a view can be shared.
 */
export function PublicFiguresScreen() {
  const params = useLocalSearchParams<{ q?: string; theme?: string; page?: string }>();
  const router = useRouter();
  const [search, setSearch] = useState(params.q ?? '');
  const q = useDebounced(search.trim(), 350);
  useEffect(() => {
    if (q !== (params.q ?? '')) router.setParams({ q: q || undefined, page: undefined });
    // The settled text drives the address, not the other way round.
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, [q]);
  const theme: ThemeFilter = (FIGURE_THEMES as readonly string[]).includes(params.theme ?? '') ? (params.theme as FigureTheme) : 'all';
  const page = Math.max(1, Number(params.page) || 1);
  const list = usePublicFigures({ q: params.q || undefined, theme: theme === 'all' ? undefined : theme, page, pageSize: PAGE_SIZE });
  const data = list.data;
  const filtered = !!params.q || theme !== 'all';
  return (
    <PublicFrame>
      <Screen title="Public figures" subtitle="Limit figures that their groups made public. Each comes as SVG, PDF and PNG, ready for a paper or a slide.">
        <View style={styles.filters}>
          <TextField label="Search public figures" value={search} onChangeText={setSearch} placeholder="Figure title or group" autoCapitalize="none" inputMode="search" />
          <ChoiceGroup<ThemeFilter>
            label="Theme"
            value={theme}
            onChange={(t) => router.setParams({ theme: t === 'all' ? undefined : t, page: undefined })}
            choices={[{ value: 'all', label: 'All themes' }, ...FIGURE_THEMES.map((t) => ({ value: t, label: THEME_LABELS[t] }))]}
          />
        </View>
        {list.isPending ? <Loading label="Loading public figures…" /> : null}
        {list.error ? <Banner tone="error" message={errorMessage(list.error)!} /> : null}
        {data && data.total === 0 ? (
          filtered ? (
            <EmptyState title="No public figures match" message="Try other words or another theme: figure titles and group names are searched." />
          ) : (
            <EmptyState title="No public figures yet" message="When a group makes one of its figures public, it appears here." />
          )
        ) : null}
        {data && data.items.length > 0 ? (
          <View style={[styles.list, list.isPlaceholderData && styles.stale]}>
            <CardGrid label="Public figures">
              {data.items.map((f) => (
                <FigureCard key={f.id} figure={f} />
              ))}
            </CardGrid>
            <Pager noun="figures" page={data.page} pageSize={data.pageSize} total={data.total} onPage={(p) => router.setParams({ page: p > 1 ? String(p) : undefined })} />
          </View>
        ) : null}
      </Screen>
    </PublicFrame>
  );
}

function FigureCard({ figure: f }: { figure: PublicFigureSummary }) {
  const url = (format: 'svg' | 'pdf' | 'png', dpi?: number) => api.publicFigures.renderUrl(f.id, format, { version: f.version, dpi });
  // Downloads are saved as files (download=1 and the download attribute), not opened over this page.
  const file = (format: 'svg' | 'pdf' | 'png', opts: { dpi?: number; text?: 'editable' } = {}) => api.publicFigures.renderUrl(f.id, format, { version: f.version, ...opts, download: true });
  return (
    <Card style={styles.card}>
      <FigureThumb uri={url('svg')} title={f.title} />
      <View style={styles.meta}>
        <Link href={`/f/${f.id}` as Href} aria-label={`${f.title}: figure page`}>
          <Text variant="title" numberOfLines={2} style={styles.titleLink}>
            {f.title}
          </Text>
        </Link>
        <Text variant="caption">
          {f.groupName} · {THEME_LABELS[f.theme]} · version {f.version} · {formatDate(f.updatedAt)}
        </Text>
      </View>
      <View style={styles.downloads}>
        <Anchor download href={file('svg')} label={`${f.title}: SVG`}>SVG</Anchor>
        <Anchor download href={file('svg', { text: 'editable' })} label={`${f.title}: editable text SVG, for vector editors`}>
          SVG, editable text
        </Anchor>
        <Anchor download href={file('pdf')} label={`${f.title}: PDF`}>PDF</Anchor>
        <Anchor download href={file('png', { dpi: 300 })} label={`${f.title}: PNG at 300 dpi`}>PNG (300 dpi)</Anchor>
      </View>
    </Card>
  );
}

const styles = StyleSheet.create({
  filters: { gap: space.md },
  list: { gap: space.md },
  stale: { opacity: 0.6 },
  card: { gap: space.sm },
  meta: { gap: space.xs },
  titleLink: { color: colors.primary, textDecorationLine: 'underline' },
  downloads: { flexDirection: 'row', flexWrap: 'wrap', gap: space.lg },
});
