import { useRouter, type Href } from 'expo-router';
import { useState } from 'react';
import { StyleSheet, View } from 'react-native';
import { ApiError } from '@/shared/api-client';
import { ENVELOPE_MAX_INPUTS, ENVELOPE_MIN_INPUTS } from '@/shared/combine/envelope';
import { useCurrentGroup } from '@/hooks/use-current-group';
import { useCreateEnvelope, useEnvelopePreview } from '@/hooks/use-results';
import { useIsWide } from '@/hooks/use-layout';
import { colors, radii, space } from '@/themes/tokens';
import { QuickPlot } from '../plot/quick-plot';
import { axisLabels } from '../results/format';
import { inputRefusals } from '../results/input-refusals';
import { curvesOnlyNote, ResultPicker } from '../results/result-picker';
import { writerGate } from '../results/writer-gate';
import { Banner } from '../ui/banner';
import { Button } from '../ui/button';
import { Card } from '../ui/card';
import { errorMessage } from '../ui/form';
import { Loading } from '../ui/loading';
import { Screen } from '../ui/screen';
import { Text } from '../ui/text';
import { TextField } from '../ui/text-field';

type Pick = { resultId: string; version: number };

/**
 * `/envelopes/new`: the best-expected envelope of several results, built in the group the user
 * works in. Inputs are what the group may build on (its own results, other groups' public
 * published ones); the server converts units and refuses mixed quantities, naming the input.
 */
export function NewEnvelopeScreen() {
  const { group } = useCurrentGroup();
  const router = useRouter();
  const [picks, setPicks] = useState<Pick[]>([]);
  const [title, setTitle] = useState('');
  const create = useCreateEnvelope(group?.id ?? '');
  const preview = useEnvelopePreview(group?.id ?? '', picks);
  const wide = useIsWide();
  const [names, setNames] = useState<Record<string, string>>({});

  const gate = writerGate(group, router, { title: 'Best-expected envelope', what: 'An envelope', verb: 'build new ones' });
  if (gate || !group) return gate;

  const key = (p: Pick) => `${p.resultId}@${p.version}`;
  // What the preview refused (before anything is stored), or what building refused.
  const { byInput, other } = inputRefusals(create.error ?? preview.error);
  const p = preview.data && !preview.error ? preview.data : null;
  const labels = p ? axisLabels(p.meta) : null;
  const tooFew = picks.length < ENVELOPE_MIN_INPUTS;
  const full = picks.length >= ENVELOPE_MAX_INPUTS;
  const submit = () =>
    create.mutate(
      { inputs: picks, ...(title.trim() ? { title: title.trim() } : {}) },
      { onSuccess: (v) => router.push(`/groups/${group.id}/results/${v.resultId}` as Href) },
    );

  return (
    <Screen title="Best-expected envelope" subtitle={`Stored as a draft result of ${group.name}`}>
      <Card>
        <Text>
          At every parameter value, the envelope takes the input with the lowest expected median limit there and reports that input's observed limit and expected
          bands. Choosing by the expected limit keeps the choice independent of the data. Inputs must limit the same quantity against the same parameter; GeV/TeV
          and fb/pb are converted to the first input's units.
        </Text>
      </Card>
      <Card>
        <Text variant="title">
          Inputs ({picks.length} of {ENVELOPE_MIN_INPUTS}–{ENVELOPE_MAX_INPUTS})
        </Text>
        {picks.length === 0 ? <Text variant="muted">No inputs yet: find results below and add at least two.</Text> : null}
        {picks.map((p, i) => (
          <View key={key(p)} style={[styles.input, byInput.has(i) && styles.inputBad]} role="group" aria-label={`Input ${i + 1}: ${names[key(p)] ?? p.resultId}`}>
            <View style={styles.grow}>
              <Text variant="label">
                {i + 1}. {names[key(p)] ?? 'Result'} <Text variant="caption">v{p.version}</Text>
              </Text>
              {byInput.has(i) ? <Text style={styles.error}>{byInput.get(i)}</Text> : null}
            </View>
            <Button compact variant="ghost" label="Remove" accessibilityLabel={`Remove input ${i + 1}`} onPress={() => {
                setPicks(picks.filter((_, j) => j !== i));
                create.reset();
              }} />
          </View>
        ))}
        {full ? (
          <Text variant="muted">An envelope takes at most {ENVELOPE_MAX_INPUTS} inputs.</Text>
        ) : (
          <ResultPicker
            groupId={group.id}
            label="Find results to use as inputs"
            parameters={1}
            hiddenNote={curvesOnlyNote('an envelope takes curves')}
            isAdded={(resultId, version) => picks.some((p) => p.resultId === resultId && p.version === version)}
            actionLabel={(r) => `Add ${r.title} v${r.version} as an input`}
            onAdd={(r) => {
              setNames((n) => ({ ...n, [`${r.id}@${r.version}`]: `${r.title} (${r.groupName})` }));
              setPicks((ps) => (ps.some((p) => p.resultId === r.id && p.version === r.version) ? ps : [...ps, { resultId: r.id, version: r.version }]));
              create.reset();
            }}
          />
        )}
      </Card>
      {picks.length >= 2 ? (
        <Card>
          <Text variant="title">Preview</Text>
          {preview.isFetching && !p ? <Loading label="Checking the inputs and computing the envelope…" /> : null}
          {p && labels ? (
            <View style={[styles.preview, preview.isFetching && styles.stale]}>
              <QuickPlot curve={p.curve} theory={p.theory} xLabel={labels.x} yLabel={labels.y} height={wide ? 300 : 240} />
              <Text variant="label">Which input where</Text>
              <View role="list" aria-label="Which input the envelope takes where">
                {p.choice.segments.map((seg, k) => (
                  <Text key={k} role="listitem">
                    {`${fmt(seg.from)}–${fmt(seg.to)}${p.meta.parameterUnit ? ` ${p.meta.parameterUnit}` : ''}: ${p.inputs[seg.input]!.title} v${p.inputs[seg.input]!.version}`}
                  </Text>
                ))}
              </View>
              {p.inputs.some((_, i) => !p.choice.chosen.includes(i)) ? (
                <Text variant="caption">{`Never the lowest expected limit, so not used: ${p.inputs.filter((_, i) => !p.choice.chosen.includes(i)).map((i) => i.title).join('; ')}.`}</Text>
              ) : null}
            </View>
          ) : null}
        </Card>
      ) : null}
      <Card>
        <TextField label="Title of the envelope" hint="Empty: “Best expected of N: ” and the first input's title." value={title} onChangeText={setTitle} maxLength={200} />
        {other.length ? <Banner tone="error" message={other.join(' · ')} /> : null}
        {[create.error, preview.error].map((e, k) => (e && !(e instanceof ApiError && e.details.length) ? <Banner key={k} tone="error" message={errorMessage(e)!} /> : null))}
        {byInput.size ? <Banner tone="error" message="Some inputs cannot be combined: see the messages beside them." /> : null}
        <Button label="Build the envelope" disabled={tooFew || !!preview.error} loading={create.isPending} onPress={submit} accessibilityHint="Stores the envelope as a draft result and opens it" />
        {tooFew ? <Text variant="caption">Add at least {ENVELOPE_MIN_INPUTS} inputs.</Text> : null}
      </Card>
    </Screen>
  );
}

const styles = StyleSheet.create({
  input: { flexDirection: 'row', alignItems: 'center', gap: space.sm, padding: space.sm, borderRadius: radii.md, borderWidth: 1, borderColor: colors.border },
  inputBad: { borderColor: colors.danger },
  grow: { flex: 1, minWidth: 0, gap: space.xs },
  error: { color: colors.danger },
  preview: { gap: space.sm },
  stale: { opacity: 0.6 },
});

/** A parameter value with at most four significant digits (crossings fall between grid points). */
const fmt = (x: number) => String(Number(x.toPrecision(4)));
