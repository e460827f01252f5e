import { useMemo, useState } from 'react';
import { StyleSheet, View, type LayoutChangeEvent } from 'react-native';
import Svg, { Path, Rect } from 'react-native-svg';
import type { ScanPointSummary } from '@/shared/schemas/scan-views';
import { planeRamp, planeStateColors, space } from '@/themes/tokens';
import { buildPlanePreview, describePlaneProgress, PLANE_POINT_STATES, planeStateCounts, type PlanePointState, type PlanePreviewInput } from '../plot/plane-preview-geometry';
import { formatValue } from '../plot/quick-plot-geometry';
import { PlaneSvg } from '../plot/plane-svg';
import { Text } from '../ui/text';

/** A scan point's state in the plane drawing: queued points whose tasks a worker holds are running. */
export function planePointState(p: Pick<ScanPointSummary, 'state' | 'tasks'>): PlanePointState {
  if (p.state === 'queued') return p.tasks.running > 0 ? 'running' : 'pending';
  return p.state;
}

/**
 * The scan's points as the plane preview's input: every point with its coordinates, the limit of
 * done points (σ×B for a σ×B scan, else μ; NaN for the others) and each point's state.
 */
export function scanPlaneInput(points: readonly ScanPointSummary[], xsec: boolean): { plane: PlanePreviewInput; states: PlanePointState[] } {
  const limit = (p: ScanPointSummary) => (p.state !== 'done' ? NaN : xsec ? (p.sigmaB?.observed ?? NaN) : (p.observed ?? NaN));
  return {
    plane: { x: points.map((p) => p.x), y: points.map((p) => p.y ?? NaN), observed: points.map(limit) },
    states: points.map(planePointState),
  };
}

const SW = 14;

/** The key's swatch of a state, drawn as the cells are. */
function Swatch({ state }: { state: PlanePointState }) {
  if (state === 'done') {
    return (
      <Svg width={SW * 1.5} height={SW}>
        {planeRamp.map((c, i) => (
          <Rect key={c} x={(i * SW * 1.5) / planeRamp.length} y={0} width={(SW * 1.5) / planeRamp.length + 0.5} height={SW} fill={c} />
        ))}
      </Svg>
    );
  }
  const s = planeStateColors;
  return (
    <Svg width={SW} height={SW}>
      {state === 'running' ? <Rect x={1} y={1} width={SW - 2} height={SW - 2} fill={s.runningFill} stroke={s.runningStroke} strokeWidth={1.5} /> : null}
      {state === 'pending' ? <Rect x={1} y={1} width={SW - 2} height={SW - 2} fill={s.pendingFill} stroke={s.pendingStroke} strokeWidth={1} /> : null}
      {state === 'cancelled' ? <Rect x={1} y={1} width={SW - 2} height={SW - 2} fill={s.pendingFill} stroke={s.cancelledStroke} strokeWidth={1} strokeDasharray="2 2" /> : null}
      {state === 'failed' ? (
        <>
          <Rect x={0} y={0} width={SW} height={SW} fill={s.failedFill} />
          <Path d={`M3 3L${SW - 3} ${SW - 3}M${SW - 3} 3L3 ${SW - 3}`} stroke={s.failedMark} strokeWidth={1.5} strokeLinecap="round" />
        </>
      ) : null}
    </Svg>
  );
}

/** What the colours mean so far: nothing yet, one value, or a range on the log ramp. */
export function colourNote(range: [number, number] | null | undefined, xsec: boolean): string {
  const on = xsec ? 'σ×B' : 'μ';
  if (!range) return `Cells fill in with their observed limit on ${on} as points finish.`;
  if (range[0] === range[1]) return `Colour: observed limit on ${on}, ${formatValue(range[0])} so far; the scale spreads as more points finish.`;
  return `Colour: observed limit on ${on} from ${formatValue(range[0])} (light) to ${formatValue(range[1])} (dark), log scale, over the points done so far.`;
}

const KEY_LABEL: Record<PlanePointState, string> = { done: 'Done', running: 'Running', pending: 'Queued', failed: 'Failed', cancelled: 'Not computed (cancelled)' };

/**
 * A two-parameter scan's plane filling in as its points finish (on every poll of the scan page):
 * done points coloured by their observed limit on the result preview's log ramp, the others by
 * state, with a key of the states and their counts. Its accessible name gives the counts.
 */
export function ScanPlane({ points, xsec, xLabel, yLabel, active, height = 300 }: { points: readonly ScanPointSummary[]; xsec: boolean; xLabel: string; yLabel: string; active: boolean; height?: number }) {
  const [width, setWidth] = useState(0);
  const { plane, states } = useMemo(() => scanPlaneInput(points, xsec), [points, xsec]);
  const geom = useMemo(() => buildPlanePreview({ width, height, plane, contours: null, ramp: planeRamp, states }), [width, height, plane, states]);
  const counts = useMemo(() => planeStateCounts(plane.x.length, states), [plane, states]);
  const onLayout = (e: LayoutChangeEvent) => {
    const w = Math.floor(e.nativeEvent.layout.width);
    if (w !== width) setWidth(w);
  };
  const range = geom?.colourRange;
  const label = `${describePlaneProgress(counts)}. Plane of ${yLabel} against ${xLabel}${range ? `; done points coloured by their observed limit from ${formatValue(range[0])} to ${formatValue(range[1])}` : ''}.`;
  // Done always; running and queued while the scan runs (so the key does not jump), any state once a point is in it.
  const keyStates = PLANE_POINT_STATES.filter((s) => s === 'done' || counts[s] > 0 || (active && (s === 'running' || s === 'pending')));
  return (
    <View style={styles.wrap}>
      <View role="img" aria-label={label} onLayout={onLayout} style={{ height }}>
        {geom ? <PlaneSvg geom={geom} xLabel={xLabel} yLabel={yLabel} /> : null}
      </View>
      <View style={styles.key} aria-hidden>
        {keyStates.map((s) => (
          <View key={s} style={styles.keyItem}>
            <Swatch state={s} />
            <Text variant="caption">{`${KEY_LABEL[s]} ${counts[s]}`}</Text>
          </View>
        ))}
      </View>
      <Text variant="caption">
        {`${colourNote(range, xsec)} The contour lines are drawn on the draft result's page.${geom && geom.stride > 1 ? ` Every ${geom.stride}th value per axis is drawn; the table has all points.` : ''}`}
      </Text>
    </View>
  );
}

const styles = StyleSheet.create({
  wrap: { gap: space.sm, width: '100%' },
  key: { flexDirection: 'row', flexWrap: 'wrap', columnGap: space.lg, rowGap: space.xs },
  keyItem: { flexDirection: 'row', alignItems: 'center', gap: space.xs },
});
