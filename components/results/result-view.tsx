import type { ReactNode } from 'react';
import { Platform, StyleSheet, View } from 'react-native';
import type { ResultVersion } from '@/shared/schemas/results';
import { useIsWide } from '@/hooks/use-layout';
import { space } from '@/themes/tokens';
import { QuickPlot } from '../plot/quick-plot';
import { Anchor } from '../ui/anchor';
import { Banner } from '../ui/banner';
import { Card } from '../ui/card';
import { CopyButton } from '../ui/copy-button';
import { Text } from '../ui/text';
import { axisLabels, parameterLabel, permalinkPath } from './format';
import { ExclusionSummary } from './exclusion-summary';
import { NewerVersionNotice } from './newer-version-notice';
import { PlaneContoursList, PlanePointsTable, PlanePreview } from './plane-view';
import { PointsTable } from './points-table';
import { Provenance } from './provenance';
import { PublicBadge, StateBadge } from './state-badge';

/** The address of a permanent link as people will paste it. */
export function absoluteUrl(path: string): string {
  if (/^https?:\/\//.test(path)) return path;
  const origin = Platform.OS === 'web' && typeof window !== 'undefined' ? window.location.origin : '';
  return `${origin}${path}`;
}

export function PermanentLink({ version }: { version: ResultVersion }) {
  if (version.state === 'draft') return null;
  const url = absoluteUrl(version.permalink ?? permalinkPath(version.slug, version.version));
  return (
    <View style={styles.gapSm}>
      <Text variant="label">Permanent link</Text>
      <Text selectable style={styles.url} aria-label="Permanent link address">
        {url}
      </Text>
      <CopyButton text={url} label="Copy link" accessibilityLabel="Copy the permanent link" />
    </View>
  );
}

/** CSV and JSON of one version, as plain links. */
export function Downloads({ csv, json, version }: { csv: string; json: string; version: number }) {
  return (
    <View style={styles.downloads}>
      <Anchor href={csv} download label={`Download version ${version} as CSV`}>
        Download CSV
      </Anchor>
      <Anchor href={json} download label={`Download version ${version} as JSON`}>
        Download JSON
      </Anchor>
    </View>
  );
}

/** Links of a version's downloads: its points, and a two-parameter version's contour lines. */
export type VersionDownloads = { csv: string; json: string; contours?: { csv: string; json: string } };

/**
 * One version, read-only: state, retraction notice, quick plot, derived numbers, provenance, the
 * points and the downloads. The result page adds its versions and actions through `side`. A
 * version over two parameters shows a plane preview, its contour lines and its points by page.
 */
export function ResultView({ version, downloads, side, top }: { version: ResultVersion; downloads: VersionDownloads; side?: ReactNode; top?: ReactNode }) {
  const wide = useIsWide();
  const labels = axisLabels(version.meta);
  const plane = version.plane;
  const plot = plane ? (
    <Card>
      <Text variant="title">Plane</Text>
      <PlanePreview plane={plane} contours={version.planeContours} xLabel={parameterLabel(version.meta)} height={wide ? 380 : 300} />
    </Card>
  ) : version.curve ? (
    <Card>
      <Text variant="title">Limit curve</Text>
      <QuickPlot curve={version.curve} theory={version.theory} xLabel={labels.x} yLabel={labels.y} height={wide ? 340 : 280} />
    </Card>
  ) : null;
  const derived = plane ? (
    <Card>
      <Text variant="title">Contour lines</Text>
      <PlaneContoursList contours={version.planeContours} downloads={downloads.contours} />
    </Card>
  ) : (
    <Card>
      <Text variant="title">Excluded ranges</Text>
      <ExclusionSummary version={version} />
    </Card>
  );
  const provenance = (
    <Card>
      <Text variant="title">Provenance</Text>
      <Provenance version={version} />
    </Card>
  );
  const points = (
    <Card>
      <Text variant="title">Points</Text>
      {plane ? (
        <PlanePointsTable plane={plane} xTitle={parameterLabel(version.meta)} />
      ) : version.curve ? (
        <PointsTable curve={version.curve} theory={version.theory} xTitle={parameterLabel(version.meta)} />
      ) : null}
    </Card>
  );
  const files = (
    <Card>
      <Text variant="title">Downloads</Text>
      <Downloads csv={downloads.csv} json={downloads.json} version={version.version} />
      <PermanentLink version={version} />
    </Card>
  );
  const status = (
    <View style={styles.status}>
      <StateBadge state={version.state} />
      <PublicBadge isPublic={version.isPublic} />
      <Text variant="caption">
        Version {version.version} · {version.groupName}
      </Text>
    </View>
  );
  const newer =
    version.newerVersion !== null && version.newerVersion !== undefined ? (
      <NewerVersionNotice slug={version.slug} version={version.version} state={version.state} newerVersion={version.newerVersion} />
    ) : null;
  const retraction =
    version.state === 'retracted' ? (
      <Banner tone="error" message={`This version was retracted${version.retractionReason ? `: ${version.retractionReason.replace(/[.!]?\s*$/, '.')}` : '.'} Do not use its numbers.`} />
    ) : version.state === 'superseded' && !newer ? (
      <Banner tone="warning" message="A newer version of this result has been published; this one is kept for reference." />
    ) : null;

  if (wide) {
    return (
      <View style={styles.gap}>
        {status}
        {retraction}
        {newer}
        {top}
        <View style={styles.columns}>
          <View style={styles.main}>
            {plot}
            {derived}
          </View>
          <View style={styles.side}>
            {side}
            {provenance}
            {files}
          </View>
        </View>
        {points}
      </View>
    );
  }
  return (
    <View style={styles.gap}>
      {status}
      {retraction}
      {newer}
      {top}
      {plot}
      {derived}
      {side}
      {provenance}
      {points}
      {files}
    </View>
  );
}

const styles = StyleSheet.create({
  gap: { gap: space.lg },
  gapSm: { gap: space.sm },
  status: { flexDirection: 'row', alignItems: 'center', gap: space.sm, flexWrap: 'wrap' },
  columns: { flexDirection: 'row', gap: space.lg, alignItems: 'flex-start' },
  main: { flex: 3, gap: space.lg, minWidth: 0 },
  side: { flex: 2, gap: space.lg, minWidth: 0 },
  downloads: { flexDirection: 'row', gap: space.xl, flexWrap: 'wrap' },
  url: { fontSize: 13, lineHeight: 18 },
});
