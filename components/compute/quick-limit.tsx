import { useEffect, useMemo, useState } from 'react';
import { StyleSheet, View } from 'react-native';
import { computeLimit, StatsInputError } from '@/shared/stats';
import type { LimitResult } from '@/shared/schemas/counting-model';
import { useDebounced } from '@/hooks/use-debounced';
import { useIsWide } from '@/hooks/use-layout';
import { space } from '@/themes/tokens';
import { Banner } from '../ui/banner';
import { Button } from '../ui/button';
import { Card } from '../ui/card';
import { ChoiceGroup } from '../ui/choice-group';
import { Loading } from '../ui/loading';
import { Text } from '../ui/text';
import { TextField } from '../ui/text-field';
import { AsimovChoice } from './asimov-choice';
import { ClsPlot } from './cls-plot';
import { LimitSummary } from './limit-summary';
import { ModelEditor } from './model-editor';
import { draftToModel, engineFieldToKey, EXAMPLE_DRAFT, readNumber, type DraftErrors, type ModelDraft } from './model-draft';

type Method = 'asymptotic' | 'exact' | 'toys';
const PREVIEW_TOYS_MAX = 20_000;

type Outcome = { result?: LimitResult; errors: DraftErrors; message?: string };

function run(draft: ModelDraft, opts: { method: Method; cl: string; asimov: 'profiled' | 'nominal'; toys: string; seed: string }): Outcome {
  const { model, errors } = draftToModel(draft);
  if (!model) return { errors };
  const cl = readNumber(opts.cl);
  if (cl === undefined || !(cl > 0 && cl < 1)) return { errors: { cl: 'Enter a confidence level between 0 and 1, e.g. 0.95' } };
  const toys = readNumber(opts.toys);
  if (opts.method === 'toys' && (toys === undefined || toys < 100 || toys > PREVIEW_TOYS_MAX)) {
    return { errors: { toys: `Between 100 and ${PREVIEW_TOYS_MAX.toLocaleString('en')} here; larger studies run as a scan on the server` } };
  }
  try {
    const result = computeLimit(model, { cl, method: opts.method, asimov: opts.asimov, toys: toys ?? 5000, seed: readNumber(opts.seed) ?? 1, clsCurve: true });
    return { result, errors: {} };
  } catch (e) {
    if (e instanceof StatsInputError) {
      const errs: DraftErrors = {};
      for (const p of e.problems) errs[engineFieldToKey(p.field)] ??= p.reason.charAt(0).toUpperCase() + p.reason.slice(1);
      return { errors: errs, message: `${e.field ? `${e.field}: ` : ''}${e.reason}` };
    }
    return { errors: {}, message: (e as Error).message };
  }
}

/**
 * A small model typed in, with its limit computed in the browser by the same statistics code the
 * server runs: instant for asymptotic and exact, on request for pseudo-experiments.
 */
export function QuickLimit() {
  const wide = useIsWide();
  const [draft, setDraft] = useState<ModelDraft>(EXAMPLE_DRAFT);
  const [method, setMethod] = useState<Method>('asymptotic');
  const [cl, setCl] = useState('0.95');
  const [asimov, setAsimov] = useState<'profiled' | 'nominal'>('profiled');
  const [toys, setToys] = useState('2000');
  const [seed, setSeed] = useState('1');
  const debounced = useDebounced(draft, 250);
  const live = useMemo(() => (method === 'toys' ? null : run(debounced, { method, cl, asimov, toys, seed })), [debounced, method, cl, asimov, toys, seed]);
  const [toyOutcome, setToyOutcome] = useState<Outcome | null>(null);
  const [toyRunning, setToyRunning] = useState(false);
  useEffect(() => setToyOutcome(null), [draft, method, cl, asimov, toys, seed]);
  const outcome = method === 'toys' ? toyOutcome : live;
  const runToys = () => {
    setToyRunning(true);
    // Let the spinner paint before the (synchronous) pseudo-experiments start.
    setTimeout(() => {
      setToyOutcome(run(draft, { method, cl, asimov, toys, seed }));
      setToyRunning(false);
    }, 30);
  };

  const form = (
    <Card>
      <Text variant="title">Counting model</Text>
      <ModelEditor draft={draft} onChange={setDraft} errors={outcome?.errors ?? {}} />
      <Text variant="label">Method</Text>
      <ChoiceGroup<Method>
        label="Method"
        value={method}
        onChange={setMethod}
        choices={[
          { value: 'asymptotic', label: 'Asymptotic CLs' },
          { value: 'toys', label: 'Pseudo-experiments' },
          { value: 'exact', label: 'Exact (one bin)' },
        ]}
      />
      <View style={styles.row}>
        <View style={styles.grow}>
          <TextField label="Confidence level" value={cl} onChangeText={setCl} inputMode="decimal" error={outcome?.errors.cl} />
        </View>
        {method === 'toys' ? (
          <>
            <View style={styles.grow}>
              <TextField label="Pseudo-experiments per hypothesis" value={toys} onChangeText={setToys} inputMode="numeric" error={outcome?.errors.toys} />
            </View>
            <View style={styles.grow}>
              <TextField label="Seed" value={seed} onChangeText={setSeed} inputMode="numeric" />
            </View>
          </>
        ) : null}
      </View>
      {method !== 'exact' ? <AsimovChoice value={asimov} onChange={setAsimov} /> : null}
    </Card>
  );

  const results = (
    <Card>
      <Text variant="title">Upper limit on μ</Text>
      {method === 'toys' ? <Button label="Run pseudo-experiments" onPress={runToys} loading={toyRunning} style={styles.start} /> : null}
      {toyRunning ? <Loading label="Running pseudo-experiments…" /> : null}
      {outcome?.message ? <Banner tone="error" message={outcome.message} /> : null}
      {outcome && !outcome.result && !outcome.message && Object.keys(outcome.errors).length ? <Banner tone="warning" message="Fix the fields marked in the model to see the limit." /> : null}
      {outcome?.result ? (
        <>
          <LimitSummary observed={outcome.result.observed} expected={outcome.result.expected} unit="" muHat={outcome.result.muHat} observedError={outcome.result.observedError} />
          {outcome.result.warnings.map((w) => (
            <Banner key={w} tone="warning" message={w} />
          ))}
          {outcome.result.cls ? <ClsPlot samples={outcome.result.cls} cl={outcome.result.cl} limit={outcome.result.observed} /> : null}
          <Text variant="caption">
            Computed here in your browser; {outcome.result.method === 'toys' ? `${outcome.result.toys?.total.toLocaleString('en')} pseudo-experiments` : outcome.result.method === 'exact' ? 'exact Poisson probabilities' : 'asymptotic formulae'}, {Math.round(outcome.result.cl * 100)}% CL.
          </Text>
        </>
      ) : null}
      {method === 'toys' && !outcome && !toyRunning ? <Text variant="muted">Pseudo-experiments take a moment: press the button to run them.</Text> : null}
    </Card>
  );

  return wide ? (
    <View style={styles.wide}>
      <View style={styles.left}>{form}</View>
      <View style={styles.right}>{results}</View>
    </View>
  ) : (
    <View style={styles.col}>
      {results}
      {form}
    </View>
  );
}

const styles = StyleSheet.create({
  col: { gap: space.lg },
  wide: { flexDirection: 'row', gap: space.lg, alignItems: 'flex-start' },
  left: { flex: 3 },
  right: { flex: 2, position: 'sticky' as never, top: 0 },
  row: { flexDirection: 'row', flexWrap: 'wrap', gap: space.md },
  grow: { flexGrow: 1, flexBasis: 140 },
  start: { alignSelf: 'flex-start' },
});
