import { Link, useRouter } from 'expo-router';
import { Pressable, StyleSheet } from 'react-native';
import { useCurrentGroup } from '@/hooks/use-current-group';
import { api } from '@/hooks/api';
import { useFigures } from '@/hooks/use-figures';
import { colors, fonts, radii, space } from '@/themes/tokens';
import { FigureThumb } from '../figure/figure-thumb';
import { THEME_LABELS } from '../figure/style-panel';
import { formatDate } from '../results/format';
import { Banner } from '../ui/banner';
import { Button } from '../ui/button';
import { Card } from '../ui/card';
import { CardGrid } from '../ui/card-grid';
import { EmptyState } from '../ui/empty-state';
import { errorMessage } from '../ui/form';
import { Loading } from '../ui/loading';
import { Screen } from '../ui/screen';
import { Text } from '../ui/text';

/** The group's figures, newest first, and a way to start one. */
export function FiguresScreen() {
  const { group, can } = useCurrentGroup();
  const list = useFigures(group?.id);
  const router = useRouter();
  if (!group) {
    return (
      <Screen title="Figures">
        <EmptyState title="No group selected" message="Figures belong to a group: create one or accept an invitation first." />
      </Screen>
    );
  }
  // Nothing is stored until the composer's first save.
  const start = () => router.push(`/groups/${group.id}/figures/new`);
  return (
    <Screen
      title="Figures"
      subtitle={group.name}
      actions={can('figure.write') ? <Button label="New figure" onPress={start} /> : null}
    >
      {list.isPending ? <Loading label="Loading figures…" /> : null}
      {list.error ? <Banner tone="error" message={errorMessage(list.error)!} /> : null}
      {list.data?.length === 0 ? (
        <EmptyState
          title="No figures yet"
          message={can('figure.write') ? 'Compose a figure from the registry’s results: overlays, bands, theory, labels with TeX.' : 'Figures made by this group will be listed here.'}
        />
      ) : null}
      {list.data && list.data.length > 0 ? (
        <CardGrid label="Figures of the group">
          {list.data.map((f) => (
            <Link key={f.id} href={`/groups/${group.id}/figures/${f.id}`} asChild>
              <Pressable role="link" aria-label={`Figure ${f.title}`} style={styles.item}>
                <Card style={styles.card}>
                  <FigureThumb uri={api.figures.renderUrl(f.id, 'svg', { version: f.version })} title={f.title} />
                  <Text variant="label" numberOfLines={2}>
                    {f.title}
                  </Text>
                  <Text variant="caption">
                    {THEME_LABELS[f.theme]} · version {f.version} · {f.isPublic ? 'public' : 'group only'} · updated {formatDate(f.updatedAt)}
                  </Text>
                </Card>
              </Pressable>
            </Link>
          ))}
        </CardGrid>
      ) : null}
      <Link href="/public/figures" style={styles.link}>
        Browse public figures of all groups
      </Link>
    </Screen>
  );
}

const styles = StyleSheet.create({
  item: { borderRadius: radii.lg, backgroundColor: colors.surface },
  card: { gap: space.sm },
  link: { color: colors.primary, fontFamily: fonts.semibold, fontSize: 15, lineHeight: 22 },
});
