import { Link, useLocalSearchParams, type Href } from 'expo-router';
import { StyleSheet, View } from 'react-native';
import { ApiError } from '@/shared/api-client';
import type { PublicFigureDetail } from '@/shared/schemas/figure-views';
import { api } from '@/hooks/api';
import { usePublicFigure } from '@/hooks/use-figures';
import { useIsWide } from '@/hooks/use-layout';
import { colors, fonts, space } from '@/themes/tokens';
import { CiteControl } from '../cite/cite-control';
import { FigureThumb } from '../figure/figure-thumb';
import { THEME_LABELS } from '../figure/style-panel';
import { PublicFrame } from '../nav/public-frame';
import { formatDate, permalinkPath } from '../results/format';
import { StateBadge } from '../results/state-badge';
import { Anchor } from '../ui/anchor';
import { Banner } from '../ui/banner';
import { Card } from '../ui/card';
import { CopyButton } from '../ui/copy-button';
import { EmptyState } from '../ui/empty-state';
import { errorMessage } from '../ui/form';
import { Loading } from '../ui/loading';
import { Screen } from '../ui/screen';
import { Text } from '../ui/text';

/**
 * `/f/<id>`: a public figure's own page, for anyone: the picture (the public render), its group,
 * caption, the result versions it draws with their permanent links, the downloads and the citation.
 * Layers the public may not see are left out of the picture, and the page says how many.
 */
export function PublicFigureScreen() {
  const params = useLocalSearchParams<{ figureId: string }>();
  const figureId = String(params.figureId ?? '');
  const figure = usePublicFigure(figureId);
  const err = figure.error instanceof ApiError ? figure.error : null;
  const missing = !!err && [400, 404].includes(err.status);

  let body;
  if (missing) {
    body = (
      <Screen title="Figure not found">
        <EmptyState
          title="Not found or not public"
          message="There is no public figure at this address. Its group may have made it private again; the public figures list has the ones open to everyone."
          action={
            <Link href="/public/figures" style={styles.link}>
              Browse public figures
            </Link>
          }
        />
      </Screen>
    );
  } else if (!figure.data) {
    body = (
      <Screen title="Figure">
        {figure.error ? <Banner tone="error" message={errorMessage(figure.error)!} /> : <Loading label="Loading the figure…" />}
      </Screen>
    );
  } else {
    body = <FigurePage figure={figure.data} />;
  }
  return <PublicFrame>{body}</PublicFrame>;
}

function FigurePage({ figure: f }: { figure: PublicFigureDetail }) {
  const wide = useIsWide();
  const render = (format: 'svg' | 'pdf' | 'png', dpi?: number) => api.publicFigures.renderUrl(f.id, format, { version: f.version, dpi });
  // Downloads are saved as files (download=1 and the download attribute), not opened over this page.
  const file = (format: 'svg' | 'pdf' | 'png', opts: { dpi?: number; text?: 'editable' } = {}) => api.publicFigures.renderUrl(f.id, format, { version: f.version, ...opts, download: true });
  const hidden =
    f.hiddenLayers > 0 ? (
      <Banner tone="info" message={`${f.hiddenLayers === 1 ? '1 layer is' : `${f.hiddenLayers} layers are`} not public and ${f.hiddenLayers === 1 ? 'is' : 'are'} not drawn.`} />
    ) : null;
  const picture = (
    <Card>
      <FigureThumb uri={render('svg')} title={f.title} />
      {hidden}
    </Card>
  );
  const caption = (
    <Card>
      <Text variant="title">Caption</Text>
      {f.caption.trim() ? (
        <Text selectable aria-label="Caption text">
          {f.caption.trim()}
        </Text>
      ) : (
        <Text variant="muted">This figure has no caption.</Text>
      )}
    </Card>
  );
  const pins = (
    <Card>
      <Text variant="title">Results drawn</Text>
      {f.pins.length === 0 ? (
        <Text variant="muted">None of the result versions in this figure is public.</Text>
      ) : (
        <View role="list" aria-label="Result versions in this figure" style={styles.pins}>
          {f.pins.map((p) => (
            <View role="listitem" key={`${p.slug}@${p.version}`} style={styles.pin}>
              <Link href={permalinkPath(p.slug, p.version) as Href} style={styles.link} aria-label={`${p.title}, version ${p.version}`}>
                {p.title}
              </Link>
              <View style={styles.pinMeta}>
                <Text variant="caption">Version {p.version}</Text>
                <StateBadge state={p.state} />
              </View>
            </View>
          ))}
        </View>
      )}
    </Card>
  );
  const files = (
    <Card>
      <Text variant="title">Downloads</Text>
      <View style={styles.downloads}>
        <Anchor href={file('svg')} download label={`${f.title}: SVG`}>SVG</Anchor>
        <Anchor href={file('svg', { text: 'editable' })} download label={`${f.title}: editable text SVG, for vector editors`}>
          SVG, editable text
        </Anchor>
        <Anchor href={file('pdf')} download label={`${f.title}: PDF`}>PDF</Anchor>
        <Anchor href={file('png', { dpi: 300 })} download label={`${f.title}: PNG at 300 dpi`}>PNG (300 dpi)</Anchor>
        <Anchor href={api.figures.exportUrl(f.id, 'csv', f.version)} download label={`${f.title}: the drawn data as CSV`}>Data (CSV)</Anchor>
      </View>
      <View style={styles.gapSm}>
        <Text variant="label">Permanent link</Text>
        <Text selectable style={styles.url} aria-label="Permanent link address">
          {f.permalink}
        </Text>
        <CopyButton text={f.permalink} label="Copy link" accessibilityLabel="Copy the permanent link" />
      </View>
    </Card>
  );
  const cite = (
    <CiteControl
      what={`version ${f.version} of this figure`}
      source={{ kind: 'figure', title: f.title, groupName: f.groupName, version: f.version, url: f.permalink, date: f.savedAt, id: f.id }}
    />
  );
  return (
    <Screen title={f.title} subtitle={`${f.groupName} · ${THEME_LABELS[f.theme]} · version ${f.version} · saved ${formatDate(f.savedAt)}`}>
      {wide ? (
        <View style={styles.columns}>
          <View style={styles.main}>
            {picture}
            {caption}
          </View>
          <View style={styles.side}>
            {cite}
            {pins}
            {files}
          </View>
        </View>
      ) : (
        <View style={styles.gap}>
          {picture}
          {cite}
          {pins}
          {caption}
          {files}
        </View>
      )}
    </Screen>
  );
}

const styles = StyleSheet.create({
  gap: { gap: space.lg },
  gapSm: { gap: space.sm },
  columns: { flexDirection: 'row', gap: space.lg, alignItems: 'flex-start' },
  main: { flex: 3, gap: space.lg, minWidth: 0 },
  side: { flex: 2, gap: space.lg, minWidth: 0 },
  pins: { gap: space.md },
  pin: { gap: space.xs },
  pinMeta: { flexDirection: 'row', alignItems: 'center', gap: space.sm, flexWrap: 'wrap' },
  downloads: { flexDirection: 'row', flexWrap: 'wrap', gap: space.lg },
  url: { fontSize: 13, lineHeight: 18 },
  link: { color: colors.primary, fontFamily: fonts.semibold, fontSize: 15, lineHeight: 22 },
});
