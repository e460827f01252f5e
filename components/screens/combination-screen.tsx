import { useRouter, type Href } from 'expo-router';
import { useState } from 'react';
import { StyleSheet, View } from 'react-native';
import { ApiError } from '@/shared/api-client';
import { JOINT_MAX_INPUTS, JOINT_MIN_INPUTS } from '@/shared/combine/joint';
import { useCurrentGroup } from '@/hooks/use-current-group';
import { useCombinationPlan, useStartCombination } from '@/hooks/use-results';
import { colors, radii, space } from '@/themes/tokens';
import { inputRefusals } from '../results/input-refusals';
import { curvesOnlyNote, ResultPicker } from '../results/result-picker';
import { writerGate } from '../results/writer-gate';
import { Banner } from '../ui/banner';
import { Button } from '../ui/button';
import { Card } from '../ui/card';
import { Checkbox } from '../ui/checkbox';
import { ChoiceGroup } from '../ui/choice-group';
import { errorMessage } from '../ui/form';
import { Loading } from '../ui/loading';
import { Screen } from '../ui/screen';
import { Text } from '../ui/text';
import { TextField } from '../ui/text-field';

type Pick = { resultId: string; version: number };

/**
 * `/combinations/new`: a joint combination of results computed by scans, in the group the user
 * works in. The plan (a dry run) lists every input's nuisance parameters, the common parameter
 * values and the ones some input lacks before anything is computed; names shared by several
 * inputs are one parameter unless unticked here. Starting it opens the scan's progress page.
 */
export function NewCombinationScreen() {
  const { group } = useCurrentGroup();
  const router = useRouter();
  const [picks, setPicks] = useState<Pick[]>([]);
  const [names, setNames] = useState<Record<string, string>>({});
  const [unlinked, setUnlinked] = useState<string[]>([]);
  const [method, setMethod] = useState<'asymptotic' | 'toys'>('asymptotic');
  const [toys, setToys] = useState('5000');
  const [title, setTitle] = useState('');
  const plan = useCombinationPlan(group?.id ?? '', picks, unlinked);
  const start = useStartCombination(group?.id ?? '');

  const gate = writerGate(group, router, { title: 'Joint combination', what: 'A combination', verb: 'start combinations' });
  if (gate || !group) return gate;

  const key = (p: Pick) => `${p.resultId}@${p.version}`;
  const { byInput, other } = inputRefusals(start.error ?? plan.error);
  const p = plan.data && !plan.error ? plan.data.combination : null;
  const toyCount = Number(toys);
  const badToys = method === 'toys' && !(Number.isInteger(toyCount) && toyCount >= 100 && toyCount <= 1_000_000);
  const reset = () => {
    start.reset();
  };
  const submit = () =>
    start.mutate(
      { inputs: picks, unlinked, options: method === 'toys' ? { method, toys: toyCount } : { method }, ...(title.trim() ? { title: title.trim() } : {}) },
      { onSuccess: (a) => (a.dryRun ? undefined : router.push(`/groups/${group.id}/scans/${a.id}` as Href)) },
    );

  return (
    <Screen title="Joint combination" subtitle={`Computed as a scan of ${group.name}; the result is a draft`}>
      <Card>
        <Text>
          Results computed by scans keep their counting models. Combined as independent channels, their bins at each parameter value go into one likelihood and
          one limit on a common signal strength μ is computed by the same engine and queue as a scan, in σ×B when every input gives the same nominal σ×B there.
        </Text>
      </Card>
      <Card>
        <Text variant="title">
          Inputs ({picks.length} of {JOINT_MIN_INPUTS}–{JOINT_MAX_INPUTS})
        </Text>
        {picks.length === 0 ? <Text variant="muted">No inputs yet: find results computed by scans below and add at least two.</Text> : null}
        {picks.map((pk, i) => {
          const info = p?.inputs[i];
          return (
            <View key={key(pk)} style={[styles.input, byInput.has(i) && styles.inputBad]} role="group" aria-label={`Input ${i + 1}: ${names[key(pk)] ?? pk.resultId}`}>
              <View style={styles.grow}>
                <Text variant="label">
                  {i + 1}. {names[key(pk)] ?? 'Result'} <Text variant="caption">v{pk.version}</Text>
                </Text>
                {info ? (
                  <Text variant="caption">
                    {`${info.points} points · nuisance parameters: ${info.nuisance.length ? info.nuisance.join(', ') : 'none'}${info.missing.length ? ` · not in every other input: ${info.missing.join(', ')}` : ''}`}
                  </Text>
                ) : null}
                {byInput.has(i) ? <Text style={styles.error}>{byInput.get(i)}</Text> : null}
              </View>
              <Button
                compact
                variant="ghost"
                label="Remove"
                accessibilityLabel={`Remove input ${i + 1}`}
                onPress={() => {
                  setPicks(picks.filter((_, j) => j !== i));
                  reset();
                }}
              />
            </View>
          );
        })}
        {picks.length < JOINT_MAX_INPUTS ? (
          <ResultPicker
            groupId={group.id}
            label="Find results to combine"
            parameters={1}
            hiddenNote={curvesOnlyNote('a joint combination takes curves')}
            isAdded={(resultId, version) => picks.some((x) => x.resultId === resultId && x.version === version)}
            actionLabel={(r) => `Add ${r.title} v${r.version} to the combination`}
            onAdd={(r) => {
              setNames((n) => ({ ...n, [`${r.id}@${r.version}`]: `${r.title} (${r.groupName})` }));
              setPicks((ps) => (ps.some((x) => x.resultId === r.id && x.version === r.version) ? ps : [...ps, { resultId: r.id, version: r.version }]));
              reset();
            }}
          />
        ) : (
          <Text variant="muted">A combination takes at most {JOINT_MAX_INPUTS} inputs.</Text>
        )}
      </Card>

      {picks.length >= 2 ? (
        <Card>
          <Text variant="title">Plan</Text>
          {plan.isFetching && !p ? <Loading label="Reading the inputs' counting models…" /> : null}
          {p ? (
            <View style={[styles.block, plan.isFetching && styles.stale]}>
              <Text>{`${p.common.length} common parameter values: ${p.common.join(', ')}.`}</Text>
              <Text>{p.quantity === 'xsec' ? 'The limit is given in σ×B (every input gives the same nominal σ×B).' : (p.quantityNote ?? 'The limit is on the signal strength μ only: the inputs differ in their nominal σ×B.')}</Text>
              {p.shared.length || p.unlinked.length ? (
                <View style={styles.block} role="group" aria-label="Nuisance parameters shared by several inputs">
                  <Text variant="label">Shared nuisance parameters</Text>
                  <Text variant="caption">Ticked: one parameter for every input that names it (fully correlated). Unticked: one per input.</Text>
                  {[...new Set([...p.shared, ...p.unlinked])].sort().map((n) => (
                    <Checkbox
                      key={n}
                      label={`${n}: one parameter for all inputs`}
                      checked={!unlinked.includes(n)}
                      onChange={(linked) => {
                        setUnlinked((u) => (linked ? u.filter((x) => x !== n) : [...u, n]));
                        reset();
                      }}
                    />
                  ))}
                </View>
              ) : (
                <Text variant="muted">No nuisance parameter is named by more than one input: the channels share none.</Text>
              )}
            </View>
          ) : null}
        </Card>
      ) : null}

      <Card>
        <ChoiceGroup
          label="Method"
          value={method}
          onChange={setMethod}
          choices={[
            { value: 'asymptotic', label: 'Asymptotic' },
            { value: 'toys', label: 'Pseudo-experiments' },
          ]}
        />
        {method === 'toys' ? (
          <TextField label="Pseudo-experiments per hypothesis" value={toys} onChangeText={setToys} inputMode="numeric" error={badToys ? 'Must be a whole number from 100 to 1,000,000' : undefined} />
        ) : null}
        <TextField label="Title of the combination" hint="Empty: a title from the inputs." value={title} onChangeText={setTitle} maxLength={200} />
        {other.length ? <Banner tone="error" message={other.join(' · ')} /> : null}
        {[start.error, plan.error].map((e, k) => (e && !(e instanceof ApiError && e.details.length) ? <Banner key={k} tone="error" message={errorMessage(e)!} /> : null))}
        {byInput.size ? <Banner tone="error" message="Some inputs cannot be combined: see the messages beside them." /> : null}
        <Button
          label="Start the combination"
          disabled={picks.length < JOINT_MIN_INPUTS || !p || badToys}
          loading={start.isPending}
          onPress={submit}
          accessibilityHint="Queues the combined grid as a scan and opens its progress page"
        />
      </Card>
    </Screen>
  );
}

const styles = StyleSheet.create({
  input: { flexDirection: 'row', alignItems: 'center', gap: space.sm, padding: space.sm, borderRadius: radii.md, borderWidth: 1, borderColor: colors.border },
  inputBad: { borderColor: colors.danger },
  grow: { flex: 1, minWidth: 0, gap: space.xs },
  block: { gap: space.sm },
  stale: { opacity: 0.6 },
  error: { color: colors.danger },
});
