import { useLocalSearchParams, useRouter, type Href } from 'expo-router';
import { useEffect, useRef, useState } from 'react';
import { StyleSheet, View } from 'react-native';
import { figureSpecSchema, type FigureSpec } from '@/shared/schemas/figures';
import { can } from '@/shared/access';
import type { FigureDetail, FigureLayerInfo } from '@/shared/schemas/figure-views';
import { api } from '@/hooks/api';
import { useCurrentGroup } from '@/hooks/use-current-group';
import { useCreateFigure, useFigure, useFigureActions, useHouseStyle, useLayerData, useSaveFigure } from '@/hooks/use-figures';
import { useIsWide } from '@/hooks/use-layout';
import { useLeaveGuard } from '@/hooks/use-leave-guard';
import { colors, space } from '@/themes/tokens';
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

/** A figure before its first save: nothing is stored until "Save" (then it gets its address). */
export const NEW_FIGURE_SPEC = { title: 'New figure', theme: 'publication', size: { preset: 'one-column' }, layers: [] } as const;

/**
 * The composer: layers from the registry, what each shows, theme, size, axes and labels, with a
 * live preview drawn by the shared scene builder. Saving makes a new version of the figure; at
 * `/groups/<group>/figures/new` the first save creates it.
 */
export function FigureComposerScreen() {
  const { groupId, figureId } = useLocalSearchParams<{ groupId: string; figureId: string }>();
  const figure = useFigure(groupId!, figureId!);
  if (figure.isPending) return <Screen title="Figure"><Loading label="Loading the figure…" /></Screen>;
  if (figure.error) return <Screen title="Figure"><Banner tone="error" message={errorMessage(figure.error)!} /></Screen>;
  return <Composer groupId={groupId!} figure={figure.data} />;
}

/** `/groups/<group>/figures/new`: the composer on an unsaved figure. */
export function NewFigureScreen() {
  const { groupId } = useLocalSearchParams<{ groupId: string }>();
  return <Composer groupId={groupId!} figure={null} />;
}

function Composer({ groupId, figure: f }: { groupId: string; figure: FigureDetail | null }) {
  const figureId = f?.id ?? '';
  const style = useHouseStyle(groupId);
  const save = useSaveFigure(groupId, figureId);
  const create = useCreateFigure(groupId);
  const actions = useFigureActions(groupId, figureId);
  const { groups } = useCurrentGroup();
  const role = groups.find((g) => g.id === groupId)?.role;
  const canWrite = can(role, 'figure.write');
  const wide = useIsWide();
  const router = useRouter();
  const savedSpec = f?.latest.spec ?? NEW_FIGURE_SPEC;
  const [history, setHistory] = useState<History>(() => startHistory(figureSpecSchema.parse(savedSpec)));
  const lastKey = useRef<string | undefined>(undefined);
  const [note, setNote] = useState('');
  const [problem, setProblem] = useState<string | null>(null);
  const [confirmDelete, setConfirmDelete] = useState(false);
  const [placing, setPlacing] = useState<number | null>(null);
  const layerData = useLayerData(groupId, history.present.layers);

  // Start editing from the stored latest version again after each save.
  const loadedVersion = f?.latest.version;
  useEffect(() => {
    if (f) setHistory(startHistory(f.latest.spec));
  }, [loadedVersion]); // eslint-disable-line react-hooks/exhaustive-deps

  const spec = history.present;
  const dirty = f ? JSON.stringify(spec) !== JSON.stringify(f.latest.spec) : true;
  const untouched = !f && history.past.length === 0;
  useLeaveGuard(canWrite && dirty && !untouched && !save.isPending && !create.isPending ? 'Leave the figure without saving? Your changes will be lost.' : null);

  const change = (next: FigureSpec, mergeKey?: string) => {
    setHistory((h) => edit(h, next, mergeKey, lastKey.current));
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
    if (!f) {
      create.mutate({ spec: parsed.data }, { onSuccess: (made) => router.replace(`/groups/${groupId}/figures/${made.id}` as Href) });
      return;
    }
    save.mutate({ spec: parsed.data, note }, { onSuccess: () => setNote('') });
  };
  const v = f?.latest.version ?? 0;

  const controls = (
    <View style={styles.col}>
      <Section title="Layers">
        <LayersPanel groupId={groupId} spec={spec} onChange={change} data={layerData.data} info={f?.latest.layers ?? []} palette={style.data?.style?.palette} />
      </Section>
      <Section title="Look and labels" initiallyOpen={wide}>
        <StylePanel spec={spec} onChange={change} placing={placing} onPlace={setPlacing} />
      </Section>
    </View>
  );
  const preview = (
    <Card>
      <FigurePreview
        spec={spec}
        style={style.data?.style ?? null}
        data={layerData}
        placing={
          placing !== null && placing < spec.annotations.length
            ? {
                index: placing,
                // One drag is one undo step.
                onMove: (p) => change({ ...spec, annotations: spec.annotations.map((a, k) => (k === placing ? { ...a, ...p } : a)) }, `annotation-place-${placing}`),
                onEnd: () => setPlacing(null),
              }
            : null
        }
      />
    </Card>
  );

  return (
    <Screen
      title={spec.title || 'Untitled figure'}
      subtitle={f ? `Version ${v}${dirty ? ' · unsaved changes' : ''} · ${f.isPublic ? 'public' : 'group only'}` : 'Not saved yet: the figure is stored when you first save it'}
      actions={
        canWrite ? (
          <>
            <Button compact variant="secondary" label="Undo" disabled={history.past.length === 0} onPress={() => setHistory(undo(history))} />
            <Button compact variant="secondary" label="Redo" disabled={history.future.length === 0} onPress={() => setHistory(redo(history))} />
            <Button compact label="Save" accessibilityLabel={f ? 'Save as a new version' : 'Save the new figure'} disabled={!dirty} loading={save.isPending || create.isPending} onPress={doSave} />
          </>
        ) : null
      }
    >
      {problem ? <Banner tone="error" message={problem} /> : null}
      {save.error || create.error ? <Banner tone="error" message={errorMessage(save.error ?? create.error)!} /> : null}
      {save.isSuccess && !dirty ? <Banner tone="success" message={`Saved as version ${v}.`} /> : null}
      {canWrite && dirty && f ? <TextField label="What changed (optional)" value={note} onChangeText={setNote} /> : null}
      {wide ? (
        <View style={styles.row}>
          <View style={styles.controls}>{canWrite ? controls : null}</View>
          <View style={styles.preview}>{preview}</View>
        </View>
      ) : (
        <View style={styles.col}>
          <View style={canWrite ? styles.phonePreview : undefined}>{preview}</View>
          {canWrite ? controls : null}
        </View>
      )}
      {f ? (
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
      ) : null}
      {canWrite && f ? (
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
          {confirmDelete ? (
            <View style={styles.confirm}>
              <Text>Delete “{f.title}” with all its versions? Cached downloads go with it; results stay. This cannot be undone.</Text>
              <View style={styles.links}>
                <Button
                  compact
                  variant="danger"
                  label="Delete figure"
                  loading={actions.remove.isPending}
                  onPress={() => actions.remove.mutate(undefined, { onSuccess: () => router.replace('/figures') })}
                />
                <Button compact variant="ghost" label="Keep it" onPress={() => setConfirmDelete(false)} />
              </View>
            </View>
          ) : (
            <Button compact variant="ghost" label="Delete this figure…" accessibilityLabel={`Delete the figure ${f.title}`} onPress={() => setConfirmDelete(true)} />
          )}
          {[actions.duplicate.error, actions.outreach.error, actions.visibility.error, actions.remove.error].filter(Boolean).map((e, i) => (
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
  confirm: { gap: space.sm },
  // On a phone the preview stays at the top of the screen while the controls scroll beneath it.
  phonePreview: { position: 'sticky' as never, top: 0, zIndex: 2, backgroundColor: colors.bg },
});
