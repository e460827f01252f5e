import { Link, useLocalSearchParams, useRouter } from 'expo-router';
import { useState } from 'react';
import { Pressable, ScrollView, StyleSheet, View } from 'react-native';
import { EXPECTED_KEYS } from '@/shared/schemas/counting-model';
import { clockTime, duration, retryNotice } from '@/shared/scans/progress';
import type { ScanDetail, ScanPointSummary } from '@/shared/schemas/scan-views';
import { api } from '@/hooks/api';
import { useCurrentGroup } from '@/hooks/use-current-group';
import { useIsWide } from '@/hooks/use-layout';
import { useCancelScan, useRerunPoint, useScan, useScanPoint } from '@/hooks/use-scans';
import { colors, fonts, radii, space } from '@/themes/tokens';
import { ClsPlot } from '../compute/cls-plot';
import { fmt, fmtFitted, LimitSummary } from '../compute/limit-summary';
import { PullsTable } from '../compute/pulls-table';
import { RerunPoint } from '../scans/rerun-point';
import { ScanPlane } from '../scans/scan-plane';
import { QuickPlot } from '../plot/quick-plot';
import { Anchor } from '../ui/anchor';
import { Hatted } from '../ui/hatted';
import { Banner } from '../ui/banner';
import { Button } from '../ui/button';
import { Card } from '../ui/card';
import { errorMessage } from '../ui/form';
import { Loading } from '../ui/loading';
import { Screen } from '../ui/screen';
import { Text } from '../ui/text';

const seconds = (s: number | null) => (s === null ? '—' : duration(s));

function Progress({ scan }: { scan: ScanDetail }) {
  const finished = scan.donePoints + scan.failedPoints;
  const pct = scan.totalPoints ? Math.round((100 * finished) / scan.totalPoints) : 0;
  const active = scan.state === 'queued' || scan.state === 'running';
  // Retry times are on the server's clock: measure the wait from the answer's own time.
  const retry = active ? retryNotice(scan.points, new Date(scan.now)) : null;
  return (
    <View style={styles.progressBox}>
      <View role="progressbar" aria-label="Points computed" aria-valuemin={0} aria-valuemax={scan.totalPoints} aria-valuenow={finished} aria-valuetext={`${finished} of ${scan.totalPoints} points, ${pct}%`} style={styles.track}>
        <View style={[styles.fill, { width: `${pct}%` }]} />
      </View>
      <Text>
        {finished} of {scan.totalPoints} points ({pct}%){scan.failedPoints ? ` · ${scan.failedPoints} failed` : ''} · elapsed {seconds(scan.elapsedSeconds)}
        {active ? ` · about ${seconds(scan.etaSeconds)} left` : ''}
      </Text>
      {retry ? <Banner tone="warning" message={retry} /> : null}
    </View>
  );
}

/** A point's state as the table shows it: chunks of pseudo-experiments done, running, or waiting for a retry. */
function pointState(p: ScanPointSummary): string {
  if (p.state !== 'queued') return p.state;
  if (p.retryAt) return `retry ${clockTime(new Date(p.retryAt))}`;
  const chunks = p.tasks.total > 1 ? ` ${p.tasks.done}/${p.tasks.total}` : '';
  return p.tasks.running > 0 ? `running${chunks}` : `queued${chunks}`;
}

/** The rerun control of a point, wired to the API: on success the new scan's progress page opens. */
function RerunControl({ groupId, scanId, index, x, y, current, max }: { groupId: string; scanId: string; index: number; x: string; y?: string; current: number; max: number }) {
  const rerun = useRerunPoint(groupId, scanId, index);
  const router = useRouter();
  return (
    <RerunPoint
      x={x}
      y={y}
      current={current}
      max={max}
      pending={rerun.isPending}
      error={rerun.error}
      onRerun={(toys) => rerun.mutate(toys, { onSuccess: (scan) => router.push(`/groups/${groupId}/scans/${scan.id}`) })}
    />
  );
}

function Diagnostics({ groupId, scanId, index, unit, canRerun }: { groupId: string; scanId: string; index: number; unit: string; canRerun: boolean }) {
  const p = useScanPoint(groupId, scanId, index);
  if (p.isPending) return <Loading label="Loading diagnostics…" />;
  if (p.error) return <Banner tone="error" message={errorMessage(p.error)!} />;
  const d = p.data!;
  return (
    <Card>
      <Text variant="title">Grid point {d.y !== null ? `(x, y) = (${fmt(d.x, 6)}, ${fmt(d.y, 6)})` : `x = ${fmt(d.x, 6)}`}</Text>
      {d.error ? <Banner tone="error" message={`${d.error.field}: ${d.error.reason}`} /> : null}
      {d.result ? (
        <>
          <LimitSummary observed={d.result.observed} expected={d.result.expected} unit="" on="μ" muHat={d.result.muHat} observedError={d.result.observedError} />
          {d.result.sigmaB ? <Text variant="caption">σ×B: observed {fmt(d.result.sigmaB.observed)} {unit}, expected {fmt(d.result.sigmaB.expected['0'])} {unit}</Text> : null}
          {d.result.warnings.map((w) => (
            <Banner key={w} tone="warning" message={w} />
          ))}
          {d.result.cls ? <ClsPlot samples={d.result.cls} cl={d.result.cl} limit={d.result.observed} /> : null}
          {d.result.fit ? (
            <>
              <Text variant="label">
                Fit: <Hatted letter="μ" /> = {fmtFitted(d.result.fit.muHat)} ± {fmtFitted(d.result.fit.muError, 2)}
                {d.result.fit.converged ? '' : ' (did not converge)'}
              </Text>
              <PullsTable pulls={d.result.fit.pulls} />
            </>
          ) : null}
        </>
      ) : null}
      <Text variant="caption">
        Attempts: {d.attempts}
        {d.computeMs !== null ? ` · computed in ${fmt(d.computeMs, 3)} ms` : ''}
        {d.rerun ? ` · ${d.rerun.toys.toLocaleString('en')} pseudo-experiments per hypothesis` : ''}
      </Text>
      {canRerun && d.rerun ? <RerunControl key={`${scanId}-${index}`} groupId={groupId} scanId={scanId} index={index} x={fmt(d.x, 6)} y={d.y !== null ? fmt(d.y, 6) : undefined} current={d.rerun.toys} max={d.rerun.maxToys} /> : null}
    </Card>
  );
}

/**
 * The grid points with every band column. On wide screens the columns share the card's width (no
 * hidden horizontal scroll); on a phone the table scrolls sideways.
 */
function PointsTable({ points, onPick, picked, xsec, fit }: { points: ScanPointSummary[]; onPick: (i: number) => void; picked: number | null; xsec: boolean; fit: boolean }) {
  // A two-parameter scan's points are (x, y): the column says so and, scrolling sideways on a phone, is wide enough for both
  // (sharing a wide card's width it stays as wide as the others, which "observed" and "expected" need).
  const plane = points.some((p) => p.y !== null);
  const cols = [plane ? 'x, y' : 'x', 'state', 'observed', ...EXPECTED_KEYS.map((k) => (k === '0' ? 'expected' : `${Number(k) > 0 ? '+' : '−'}${Math.abs(Number(k))}σ`))];
  const Wrap = fit ? View : ScrollView;
  const td = fit ? [styles.td, styles.tdFit] : styles.td;
  const stateTd = fit ? styles.stateFit : styles.stateTd;
  const atTd = plane && !fit ? [td, styles.atTd] : td;
  return (
    <Wrap {...(fit ? {} : { horizontal: true })}>
      <View role="table" aria-label="Grid points" style={fit ? styles.tableFit : undefined}>
        <View role="row" style={[styles.tr, styles.th]}>
          {cols.map((c, i) => (
            <Text key={c} variant="label" style={[td, fit && styles.thFit, c === 'state' && stateTd, i === 0 && atTd]}>
              {c}
            </Text>
          ))}
        </View>
        {points.map((p) => {
          const v = xsec && p.sigmaB ? p.sigmaB : p.observed !== null ? { observed: p.observed, expected: p.expected } : null;
          return (
            <Pressable key={p.index} role="row" aria-label={`Show diagnostics of ${p.y !== null ? `(x, y) = (${p.x}, ${p.y})` : `x = ${p.x}`}`} onPress={() => onPick(p.index)} style={[styles.tr, picked === p.index && styles.picked]}>
              <Text style={atTd}>{p.y !== null ? `${fmt(p.x, 6)}, ${fmt(p.y, 6)}` : fmt(p.x, 6)}</Text>
              <Text style={[td, stateTd, p.state === 'failed' && styles.failed]}>{pointState(p)}</Text>
              <Text style={td}>{fmt(v?.observed)}</Text>
              {EXPECTED_KEYS.map((k) => (
                <Text key={k} style={td}>
                  {fmt(v?.expected?.[k])}
                </Text>
              ))}
            </Pressable>
          );
        })}
      </View>
    </Wrap>
  );
}

/** A scan's live progress, its limits filling in, and the diagnostics of any point. */
export function ScanScreen() {
  const { groupId, scanId } = useLocalSearchParams<{ groupId: string; scanId: string }>();
  const scan = useScan(groupId!, scanId!);
  const cancel = useCancelScan(groupId!, scanId!);
  const { can } = useCurrentGroup();
  const wide = useIsWide();
  const [picked, setPicked] = useState<number | null>(null);
  if (scan.isPending) return <Screen title="Scan"><Loading label="Loading the scan…" /></Screen>;
  if (scan.error) return <Screen title="Scan"><Banner tone="error" message={errorMessage(scan.error)!} /></Screen>;
  const s = scan.data!;
  const xsec = s.meta.quantity === 'xsec';
  const unit = xsec ? s.meta.quantityUnit : '';
  const done = s.points.filter((p) => p.state === 'done' && (xsec ? p.sigmaB : p.observed !== null));
  const curve = {
    x: done.map((p) => p.x),
    observed: done.map((p) => (xsec ? p.sigmaB!.observed : p.observed!)),
    expected: Object.fromEntries(EXPECTED_KEYS.map((k) => [k, done.map((p) => (xsec ? p.sigmaB!.expected[k] : p.expected![k]))])),
  };
  const running = s.state === 'queued' || s.state === 'running';
  const xLabel = `${s.meta.parameterName}${s.meta.parameterUnit ? ` [${s.meta.parameterUnit}]` : ''}`;
  const yLabel = xsec ? `σ×B [${unit}]` : 'μ';
  return (
    <Screen
      title={s.title}
      subtitle={`Scan · ${s.state} · ${s.options.method === 'toys' ? `pseudo-experiments (${s.options.toys})` : 'asymptotic CLs'} · ${Math.round(s.options.cl * 100)}% CL`}
      actions={running && can('result.write') ? <Button variant="danger" label="Cancel scan" loading={cancel.isPending} onPress={() => cancel.mutate()} /> : null}
    >
      <Card>
        <Progress scan={s} />
        {s.state === 'cancelled' ? <Banner tone="warning" message="This scan was cancelled; the points that finished are kept." /> : null}
        {s.error ? <Banner tone="error" message={s.error} /> : null}
        {s.resultId ? (
          <Banner tone="success" message={`The limits are stored as draft version ${s.resultVersion} of a result.`} />
        ) : null}
        <View style={styles.links}>
          {s.resultId ? (
            <Link href={`/groups/${groupId}/results/${s.resultId}?v=${s.resultVersion}`} style={styles.link}>
              Open the draft result
            </Link>
          ) : null}
          <Anchor href={api.scans.inputsUrl(groupId!, scanId!)}>Download the inputs (JSON)</Anchor>
        </View>
        {cancel.error ? <Banner tone="error" message={errorMessage(cancel.error)!} /> : null}
      </Card>
      <View style={wide ? styles.row : styles.col}>
        <View style={[styles.col, wide && styles.main]}>
          <Card>
            <Text variant="title">Limits so far</Text>
            {s.points.some((p) => p.y !== null) ? (
              // Over two parameters a curve against x alone would stack points: the grid fills in instead.
              <ScanPlane points={s.points} xsec={xsec} active={running} xLabel={xLabel} yLabel={`${s.meta.yName ?? 'y'}${s.meta.yUnit ? ` [${s.meta.yUnit}]` : ''}`} />
            ) : curve.x.length >= 2 ? (
              <QuickPlot curve={curve} xLabel={xLabel} yLabel={yLabel} />
            ) : (
              <Text variant="muted">The plot appears when two points have finished.</Text>
            )}
          </Card>
          <Card>
            <Text variant="title">Grid points</Text>
            <Text variant="caption">Choose a point to see its CLs curve, fit and warnings. {xsec ? `Limits on σ×B in ${unit}.` : 'Limits on μ.'}</Text>
            <PointsTable points={s.points} picked={picked} onPick={setPicked} xsec={xsec} fit={wide} />
          </Card>
        </View>
        <View style={[styles.col, wide && styles.side]}>
          {picked !== null ? <Diagnostics groupId={groupId!} scanId={scanId!} index={picked} unit={unit} canRerun={!running && s.options.method === 'toys' && can('result.write')} /> : <Banner tone="info" message="Choose a grid point to see its diagnostics." />}
        </View>
      </View>
    </Screen>
  );
}

const styles = StyleSheet.create({
  progressBox: { gap: space.sm },
  track: { height: 14, borderRadius: radii.pill, backgroundColor: colors.surfaceAlt, overflow: 'hidden' },
  fill: { height: 14, backgroundColor: colors.primary },
  links: { flexDirection: 'row', flexWrap: 'wrap', gap: space.lg },
  link: { color: colors.primary, fontFamily: fonts.semibold },
  row: { flexDirection: 'row', gap: space.lg, alignItems: 'flex-start' },
  col: { gap: space.lg },
  main: { flex: 3 },
  side: { flex: 2 },
  tr: { flexDirection: 'row', borderBottomWidth: 1, borderBottomColor: colors.border, minHeight: 36, alignItems: 'center' },
  th: { borderBottomColor: colors.borderStrong },
  td: { width: 86, paddingHorizontal: space.xs, fontSize: 13 },
  stateTd: { width: 116 },
  tableFit: { width: '100%' },
  tdFit: { width: undefined, flex: 1, minWidth: 0 },
  stateFit: { flex: 1.2 },
  atTd: { width: 110 },
  thFit: { fontSize: 13 },
  picked: { backgroundColor: colors.primarySoft },
  failed: { color: colors.danger },
});
