import { useMemo, useState } from 'react';
import { StyleSheet, View, type LayoutChangeEvent } from 'react-native';
import { contourGroups } from '@/shared/curves/plane';
import type { Plane, PlaneContours } from '@/shared/schemas/plane';
import { planeRamp, space } from '@/themes/tokens';
import { buildPlanePreview } from '../plot/plane-preview-geometry';
import { PlaneSvg } from '../plot/plane-svg';
import { Anchor } from '../ui/anchor';
import { Button } from '../ui/button';
import { Text } from '../ui/text';
import { formatValue } from './format';
import { NumberTable } from './points-table';

/** Rows per page of the points table (a plane has up to 40,000 points). */
export const PLANE_PAGE_ROWS = 50;

/** The second parameter's axis title: "m(χ) [GeV]". */
export const secondParameterLabel = (plane: Pick<Plane, 'yName' | 'yUnit'>) => (plane.yUnit ? `${plane.yName} [${plane.yUnit}]` : plane.yName);

/**
 * A quick look at the plane: each point a cell coloured by its limit (log scale, light = low),
 * and the contour lines over them. Labels are text children, never parsed as markup.
 */
export function PlanePreview({ plane, contours, xLabel, height = 300 }: { plane: Plane; contours: PlaneContours | null; xLabel: string; height?: number }) {
  const [width, setWidth] = useState(0);
  const geom = useMemo(() => buildPlanePreview({ width, height, plane, contours, ramp: planeRamp }), [width, height, plane, contours]);
  const yLabel = secondParameterLabel(plane);
  const onLayout = (e: LayoutChangeEvent) => {
    const w = Math.floor(e.nativeEvent.layout.width);
    if (w !== width) setWidth(w);
  };
  const groups = contours ? contourGroups(contours) : [];
  const summary = `Plane of ${plane.x.length} points, ${yLabel} against ${xLabel}, coloured by the ${plane.observed ? 'observed' : 'expected median'} limit; ${groups.length ? `contour lines: ${groups.map((g) => g.label).join(', ')}` : 'no contour lines'}`;
  return (
    <View style={styles.gap}>
      <View role="img" aria-label={summary} onLayout={onLayout} style={{ height }}>
        {geom ? <PlaneSvg geom={geom} xLabel={xLabel} yLabel={yLabel} /> : null}
      </View>
      {geom?.colourRange ? (
        <Text variant="caption">
          {`Colour: ${geom.colouredBy} limit from ${formatValue(geom.colourRange[0])} (light) to ${formatValue(geom.colourRange[1])} (dark), log scale.${geom.stride > 1 ? ` Every ${geom.stride}th value per axis is drawn; the table and downloads have all points.` : ''} Lines: observed solid, expected dashed, ±1σ dotted.`}
        </Text>
      ) : null}
    </View>
  );
}

/** The plane's points, a page at a time. */
export function PlanePointsTable({ plane, xTitle }: { plane: Plane; xTitle: string }) {
  const [page, setPage] = useState(0);
  const n = plane.x.length;
  const pages = Math.max(1, Math.ceil(n / PLANE_PAGE_ROWS));
  const from = page * PLANE_PAGE_ROWS;
  const to = Math.min(n, from + PLANE_PAGE_ROWS);
  const columns = useMemo(() => {
    const cols: { title: string; values: number[] }[] = [
      { title: xTitle, values: plane.x },
      { title: secondParameterLabel(plane), values: plane.y },
    ];
    if (plane.observed) cols.push({ title: 'Observed', values: plane.observed });
    for (const [k, title] of [['-2', 'Exp. −2σ'], ['-1', 'Exp. −1σ'], ['0', 'Expected'], ['1', 'Exp. +1σ'], ['2', 'Exp. +2σ']] as const) {
      const v = plane.expected?.[k];
      if (v) cols.push({ title, values: v });
    }
    if (plane.theory) {
      cols.push({ title: 'Theory', values: plane.theory.central });
      if (plane.theory.lower) cols.push({ title: 'Theory low', values: plane.theory.lower });
      if (plane.theory.upper) cols.push({ title: 'Theory high', values: plane.theory.upper });
    }
    return cols.map((c) => ({ title: c.title, values: c.values.slice(from, to) }));
  }, [plane, xTitle, from, to]);
  return (
    <View style={styles.gap}>
      <NumberTable columns={columns} label={`Points ${from + 1} to ${to} of ${n}`} rows={PLANE_PAGE_ROWS} />
      {pages > 1 ? (
        <View style={styles.pager}>
          <Button compact variant="ghost" label="Previous" accessibilityLabel="Previous page of points" disabled={page === 0} onPress={() => setPage((p) => Math.max(0, p - 1))} />
          <Text variant="caption">{`Points ${from + 1}–${to} of ${n}`}</Text>
          <Button compact variant="ghost" label="Next" accessibilityLabel="Next page of points" disabled={page >= pages - 1} onPress={() => setPage((p) => Math.min(pages - 1, p + 1))} />
        </View>
      ) : null}
    </View>
  );
}

/** The contour lines of the plane, by kind, with their downloads. */
export function PlaneContoursList({ contours, downloads }: { contours: PlaneContours | null; downloads?: { csv: string; json: string } }) {
  const groups = contours ? contourGroups(contours) : [];
  return (
    <View style={styles.gap}>
      {contours?.problem ? <Text variant="muted">{contours.problem}</Text> : null}
      {groups.length ? (
        <View role="list" aria-label="Contour lines" style={styles.gapSm}>
          {groups.map((g) => {
            const vertices = g.lines.reduce((s, l) => s + l.points.length, 0);
            const closed = g.lines.filter((l) => l.closed).length;
            return (
              <Text key={g.which} role="listitem">
                {`${g.label}: ${g.lines.length === 1 ? '1 line' : `${g.lines.length} lines`}, ${vertices} vertices${closed ? `, ${closed} closed` : ''}`}
              </Text>
            );
          })}
        </View>
      ) : !contours?.problem ? (
        <Text variant="muted">No contour line crosses this plane: the limit stays on one side everywhere.</Text>
      ) : null}
      {downloads ? (
        <View style={styles.pager}>
          <Anchor href={downloads.csv} download label="Download the contour lines as CSV">
            Contours CSV
          </Anchor>
          <Anchor href={downloads.json} download label="Download the contour lines as JSON">
            Contours JSON
          </Anchor>
        </View>
      ) : null}
    </View>
  );
}

const styles = StyleSheet.create({
  gap: { gap: space.md, width: '100%' },
  gapSm: { gap: space.xs },
  pager: { flexDirection: 'row', alignItems: 'center', gap: space.lg, flexWrap: 'wrap' },
});
