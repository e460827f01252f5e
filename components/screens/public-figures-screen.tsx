import { useLocalSearchParams, useRouter } from 'expo-router';
import { useEffect, useState } from 'react';
import { Image, StyleSheet, View } from 'react-native';
import { useDebounced } from '@/hooks/use-debounced';
import { usePublicFigures } from '@/hooks/use-figures';
import { api } from '@/hooks/api';
import { FIGURE_THEMES, type FigureTheme } from '@/shared/schemas/figures';
import type { PublicFigureSummary } from '@/shared/schemas/figure-views';
import { colors, radii, space } from '@/themes/tokens';
import { THEME_LABELS } from '../figure/style-panel';
import { PublicFrame } from '../nav/public-frame';
import { formatDate } from '../results/format';
import { Anchor } from '../ui/anchor';
import { Banner } from '../ui/banner';
import { Card } from '../ui/card';
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
  // Cards in as many columns of ≥ 300 px as the list's own width allows (measured, so side navigation or margins count).
  const [listWidth, setListWidth] = useState(0);
  const columns = Math.max(1, Math.min(3, Math.floor((listWidth + space.md) / (300 + space.md))));
  const cardWidth = listWidth > 0 ? (listWidth - space.md * (columns - 1)) / columns : undefined;
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
            <View style={styles.grid} role="list" aria-label="Public figures" onLayout={(ev) => setListWidth(ev.nativeEvent.layout.width)}>
              {data.items.map((f) => (
                <View key={f.id} role="listitem" style={{ width: cardWidth ?? '100%' }}>
                  <FigureCard figure={f} />
                </View>
              ))}
            </View>
            <Pager noun="figures" page={data.page} pageSize={data.pageSize} total={data.total} onPage={(p) => router.setParams({ page: p > 1 ? String(p) : undefined })} />
          </View>
        ) : null}
      </Screen>
    </PublicFrame>
  );
}

function FigureCard({ figure: f }: { figure: PublicFigureSummary }) {
  const [failed, setFailed] = useState(false);
  const url = (format: 'svg' | 'pdf' | 'png', dpi?: number) => api.publicFigures.renderUrl(f.id, format, { version: f.version, dpi });
  return (
    <Card style={styles.card}>
      <View style={styles.picture}>
        {failed ? (
          <Text variant="muted" style={styles.failed}>
            The picture could not be drawn; the downloads below may still work.
          </Text>
        ) : (
          <Image source={{ uri: url('svg') }} resizeMode="contain" style={styles.image} accessibilityLabel={`Figure: ${f.title}`} onError={() => setFailed(true)} />
        )}
      </View>
      <View style={styles.meta}>
        <Text variant="title" numberOfLines={2}>
          {f.title}
        </Text>
        <Text variant="caption">
          {f.groupName} · {THEME_LABELS[f.theme]} · version {f.version} · {formatDate(f.updatedAt)}
        </Text>
      </View>
      <View style={styles.downloads}>
        <Anchor href={url('svg')} label={`${f.title}: SVG`}>SVG</Anchor>
        <Anchor href={url('pdf')} label={`${f.title}: PDF`}>PDF</Anchor>
        <Anchor href={url('png', 300)} label={`${f.title}: PNG at 300 dpi`}>PNG (300 dpi)</Anchor>
      </View>
    </Card>
  );
}

const styles = StyleSheet.create({
  filters: { gap: space.md },
  list: { gap: space.md },
  stale: { opacity: 0.6 },
  grid: { flexDirection: 'row', flexWrap: 'wrap', gap: space.md },
  card: { gap: space.sm },
  picture: { aspectRatio: 4 / 3, backgroundColor: colors.surface, borderRadius: radii.md, borderWidth: 1, borderColor: colors.border, overflow: 'hidden', justifyContent: 'center' },
  image: { width: '100%', height: '100%' },
  failed: { padding: space.md, textAlign: 'center' },
  meta: { gap: space.xs },
  downloads: { flexDirection: 'row', flexWrap: 'wrap', gap: space.lg },
});
