import { useLocalSearchParams, useRouter } from 'expo-router';
import { useEffect, useRef, useState } from 'react';
import { StyleSheet, View } from 'react-native';
import { figureSpecSchema, type FigureSpec } from '@/shared/schemas/figures';
import type { FigureLayerInfo } from '@/shared/schemas/figure-views';
import { api } from '@/hooks/api';
import { useCurrentGroup } from '@/hooks/use-current-group';
import { useFigure, useFigureActions, useHouseStyle, useLayerData, useSaveFigure } from '@/hooks/use-figures';
import { useIsWide } from '@/hooks/use-layout';
import { space } from '@/themes/tokens';
import { edit, redo, startHistory, undo, type History } from '../figure/composer-model';
import { FigurePreview } from '../figure/figure-preview';
import { LayersPanel } from '../figure/layers-panel';
import { StylePanel } from '../figure/style-panel';
import { Anchor } from '../ui/anchor';
import { Banner } from '../ui/banner';
import { Button } from '../ui/button';
import { Card } from '../ui/card';
import { Checkbox } from '../ui/checkbox';
import { errorMessage } from '../ui/form';
import { Loading } from '../ui/loading';
import { Screen } from '../ui/screen';
import { Section } from '../ui/section';
import { Text } from '../ui/text';
import { TextField } from '../ui/text-field';

/**
 * The composer: layers from the registry, what each shows, theme, size, axes and labels, with a
 * live preview drawn by the shared scene builder. Saving makes a new version of the figure.
 */
export function FigureComposerScreen() {
  const { groupId, figureId } = useLocalSearchParams<{ groupId: string; figureId: string }>();
  const figure = useFigure(groupId!, figureId!);
  const style = useHouseStyle(groupId!);
  const save = useSaveFigure(groupId!, figureId!);
  const actions = useFigureActions(groupId!, figureId!);
  const { groups } = useCurrentGroup();
  const role = groups.find((g) => g.id === groupId)?.role;
  const canWrite = role === 'owner' || role === 'curator' || role === 'analyst' || role === 'editor';
  const wide = useIsWide();
  const router = useRouter();
  const [history, setHistory] = useState<History | null>(null);
  const lastKey = useRef<string | undefined>(undefined);
  const [note, setNote] = useState('');
  const [problem, setProblem] = useState<string | null>(null);
  const layerData = useLayerData(groupId!, history?.present.layers ?? []);

  // Start editing from the stored latest version (again after each save).
  const loadedVersion = figure.data?.latest.version;
  useEffect(() => {
    if (figure.data) setHistory(startHistory(figure.data.latest.spec));
  }, [loadedVersion]); // eslint-disable-line react-hooks/exhaustive-deps

  if (figure.isPending || !history) return <Screen title="Figure">{figure.error ? <Banner tone="error" message={errorMessage(figure.error)!} /> : <Loading label="Loading the figure…" />}</Screen>;
  if (figure.error) return <Screen title="Figure"><Banner tone="error" message={errorMessage(figure.error)!} /></Screen>;
  const f = figure.data!;
  const spec = history.present;
  const dirty = JSON.stringify(spec) !== JSON.stringify(f.latest.spec);
  const change = (next: FigureSpec, mergeKey?: string) => {
    setHistory((h) => (h ? edit(h, next, mergeKey, lastKey.current) : h));
    lastKey.current = mergeKey;
  };
  const doSave = () => {
    const parsed = figureSpecSchema.safeParse(spec);
    if (!parsed.success) {
      const i = parsed.error.issues[0]!;
      setProblem(`${i.path.join('.') || 'figure'}: ${i.message}`);
      return;
    }
    setProblem(null);
    save.mutate({ spec: parsed.data, note }, { onSuccess: () => setNote('') });
  };
  const v = f.latest.version;

  const controls = (
    <View style={styles.col}>
      <Section title="Layers">
        <LayersPanel groupId={groupId!} spec={spec} onChange={change} data={layerData.data} info={f.latest.layers} palette={style.data?.style?.palette} />
      </Section>
      <Section title="Look and labels" initiallyOpen={wide}>
        <StylePanel spec={spec} onChange={change} />
      </Section>
    </View>
  );
  const preview = (
    <Card>
      <FigurePreview spec={spec} style={style.data?.style ?? null} data={layerData} />
    </Card>
  );

  return (
    <Screen
      title={spec.title || 'Untitled figure'}
      subtitle={`Version ${v}${dirty ? ' · unsaved changes' : ''} · ${f.isPublic ? 'public' : 'group only'}`}
      actions={
        canWrite ? (
          <>
            <Button compact variant="secondary" label="Undo" disabled={history.past.length === 0} onPress={() => setHistory(undo(history))} />
            <Button compact variant="secondary" label="Redo" disabled={history.future.length === 0} onPress={() => setHistory(redo(history))} />
            <Button compact label="Save" accessibilityLabel="Save as a new version" disabled={!dirty} loading={save.isPending} onPress={doSave} />
          </>
        ) : null
      }
    >
      {problem ? <Banner tone="error" message={problem} /> : null}
      {save.error ? <Banner tone="error" message={errorMessage(save.error)!} /> : null}
      {save.isSuccess && !dirty ? <Banner tone="success" message={`Saved as version ${v}.`} /> : null}
      {canWrite && dirty ? <TextField label="What changed (optional)" value={note} onChangeText={setNote} /> : null}
      {wide ? (
        <View style={styles.row}>
          <View style={styles.controls}>{canWrite ? controls : null}</View>
          <View style={styles.preview}>{preview}</View>
        </View>
      ) : (
        <View style={styles.col}>
          {preview}
          {canWrite ? controls : null}
        </View>
      )}
      <Card>
        <Text variant="title">Downloads (version {v})</Text>
        <View style={styles.links}>
          {/* Saved as files (download=1 and the download attribute): the editor stays in its tab. */}
          <Anchor download href={api.figures.renderUrl(f.id, 'svg', { version: v, download: true })}>
            SVG
          </Anchor>
          <Anchor download href={api.figures.renderUrl(f.id, 'svg', { version: v, text: 'editable', download: true })} label="SVG with editable text, for vector editors">
            SVG, editable text
          </Anchor>
          <Anchor download href={api.figures.renderUrl(f.id, 'pdf', { version: v, download: true })}>
            PDF
          </Anchor>
          <Anchor download href={api.figures.renderUrl(f.id, 'png', { version: v, dpi: 300, download: true })}>
            PNG (300 dpi)
          </Anchor>
          <Anchor download href={api.figures.exportUrl(f.id, 'csv', v)}>
            Data (CSV)
          </Anchor>
          <Anchor download href={api.figures.exportUrl(f.id, 'caption', v)}>
            Caption draft
          </Anchor>
        </View>
        {dirty ? <Text variant="caption">Downloads show the saved version; save to include your changes.</Text> : null}
      </Card>
      {canWrite ? (
        <Card>
          <Text variant="title">Copies and sharing</Text>
          <Checkbox label="Public: anyone can see and download this figure" checked={f.isPublic} onChange={(p) => actions.visibility.mutate(p)} />
          {publicNote(f.latest.layers, f.isPublic)}
          <View style={styles.links}>
            <Button compact variant="secondary" label="Duplicate" loading={actions.duplicate.isPending} onPress={() => actions.duplicate.mutate(undefined, { onSuccess: (c) => router.push(`/groups/${groupId}/figures/${c.id}`) })} />
            <Button
              compact
              variant="secondary"
              label="Make an outreach version"
              loading={actions.outreach.isPending}
              onPress={() => actions.outreach.mutate(undefined, { onSuccess: (c) => router.push(`/groups/${groupId}/figures/${c.id}`) })}
            />
          </View>
          {[actions.duplicate.error, actions.outreach.error, actions.visibility.error].filter(Boolean).map((e, i) => (
            <Banner key={i} tone="error" message={errorMessage(e)!} />
          ))}
        </Card>
      ) : null}
    </Screen>
  );
}

/**
 * What the public will see of the saved version: layers whose results are drafts or not public are
 * left out of public renders (with a note on the figure), so say so before and after sharing.
 */
function publicNote(layers: FigureLayerInfo[], isPublic: boolean) {
  const hidden = layers.filter((l) => !l.publiclyVisible).length;
  if (hidden === 0) return null;
  const which = hidden === layers.length ? (hidden === 1 ? 'Its only layer shows a result' : `All ${hidden} layers show results`) : `${hidden} of ${layers.length} layers ${hidden === 1 ? 'shows a result' : 'show results'}`;
  const message = `${which} the public cannot see (a draft, or not public). Public copies leave ${hidden === 1 ? 'it' : 'them'} out and say so on the figure; publish ${hidden === 1 ? 'that result' : 'those results'} as public to show ${hidden === 1 ? 'it' : 'them'}.`;
  return isPublic ? <Banner tone="warning" message={message} /> : <Text variant="caption">{message}</Text>;
}

const styles = StyleSheet.create({
  row: { flexDirection: 'row', gap: space.lg, alignItems: 'flex-start' },
  col: { gap: space.lg },
  controls: { flex: 2, gap: space.lg },
  preview: { flex: 3, position: 'sticky' as never, top: 0 },
  links: { flexDirection: 'row', flexWrap: 'wrap', gap: space.lg },
});
