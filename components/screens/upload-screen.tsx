import * as DocumentPicker from 'expo-document-picker';
import { Link, useLocalSearchParams, useRouter, type Href } from 'expo-router';
import { useEffect, useMemo, useState, type ReactNode } from 'react';
import { StyleSheet, View } from 'react-native';
import { can } from '@/shared/access';
import { unusedNumericColumns, type ColumnMapping } from '@/shared/curves/csv';
import type { Plane } from '@/shared/schemas/plane';
import { createVersionSchema, versionMetaSchema, type Curve, type Theory } from '@/shared/schemas/results';
import { useCurrentGroup } from '@/hooks/use-current-group';
import { useIsWide } from '@/hooks/use-layout';
import { useUploadLimit } from '@/hooks/use-limits';
import { useAddVersion, useCreateResult, useResult, useResultVersion } from '@/hooks/use-results';
import { useMe } from '@/hooks/use-session';
import { colors, fonts, space } from '@/themes/tokens';
import { QuickPlot } from '../plot/quick-plot';
import { formatBytes } from '@/shared/bytes';
import { axisLabels, parameterLabel } from '../results/format';
import { PlanePointsTable, PlanePreview } from '../results/plane-view';
import { PointsTable } from '../results/points-table';
import { Banner } from '../ui/banner';
import { Button } from '../ui/button';
import { Card } from '../ui/card';
import { EmptyState } from '../ui/empty-state';
import { checkForm, errorMessage, type FieldErrors } from '../ui/form';
import { Loading } from '../ui/loading';
import { Screen } from '../ui/screen';
import { Text } from '../ui/text';
import { TextField } from '../ui/text-field';
import { MappingEditor } from '../upload/mapping-editor';
import { META_FIELD_LABELS, MetaForm } from '../upload/meta-form';
import { PreviewStatus } from '../upload/preview-status';
import { PreviewTable } from '../upload/preview-table';
import { ProblemList } from '../upload/problem-list';
import {
  analyseFile,
  curveFromTable,
  draftFromMeta,
  planeFromTable,
  EMPTY_META,
  guessMeta,
  isMappingProblem,
  metaInput,
  PICKER_TYPES,
  previewCurve,
  sizeProblem,
  splitServerDetails,
  uploadForm,
  type Analysed,
  type MetaDraft,
  type Problem,
} from '../upload/upload-model';

type Picked = { name: string; size: number; file: Blob | null; analysed: Analysed };
type Target = { groupId: string; groupName: string; resultId?: string; resultTitle?: string };

const changeNoteSchema = createVersionSchema.pick({ changeNote: true });

/** Reads the picked file's bytes (a File on the web) after the size check. */
async function readPicked(asset: DocumentPicker.DocumentPickerAsset, limit: number): Promise<Picked> {
  const size = asset.size ?? asset.file?.size ?? 0;
  const tooBig = sizeProblem(size, limit);
  if (tooBig) return { name: asset.name, size, file: null, analysed: { kind: 'invalid', problems: [tooBig] } };
  const buffer = asset.file ? await asset.file.arrayBuffer() : await (await fetch(asset.uri)).arrayBuffer();
  const bytes = new Uint8Array(buffer);
  const file = asset.file ?? new Blob([bytes], { type: asset.mimeType ?? 'text/csv' });
  return { name: asset.name, size: bytes.length, file, analysed: analyseFile(asset.name, bytes, limit) };
}

function Step({ n, title, children, done }: { n: number; title: string; children: ReactNode; done?: boolean }) {
  return (
    <Card>
      <View style={styles.stepHead}>
        <View style={[styles.stepNo, done && styles.stepDone]}>
          <Text style={styles.stepNoText}>{done ? '✓' : n}</Text>
        </View>
        <Text variant="title">{title}</Text>
      </View>
      {children}
    </Card>
  );
}

function UploadForm({ target, initialMeta }: { target: Target; initialMeta?: MetaDraft }) {
  const router = useRouter();
  const wide = useIsWide();
  const isVersion = !!target.resultId;
  const create = useCreateResult(target.groupId);
  const addVersion = useAddVersion(target.groupId, target.resultId ?? '');
  const save = isVersion ? addVersion : create;

  const uploadLimit = useUploadLimit();
  const [picked, setPicked] = useState<Picked | null>(null);
  const [reading, setReading] = useState(false);
  const [pickError, setPickError] = useState<string | null>(null);
  const [mapping, setMapping] = useState<ColumnMapping>({});
  const [meta, setMeta] = useState<MetaDraft>(initialMeta ?? EMPTY_META);
  const [touched, setTouched] = useState<Set<string>>(new Set());
  const [changeNote, setChangeNote] = useState('');
  const [theoryLabel, setTheoryLabel] = useState('');
  const [fromServer, setFromServer] = useState<Problem[]>([]);
  const [serverFields, setServerFields] = useState<FieldErrors>({});

  const touch = (f: string) => setTouched((t) => (t.has(f) ? t : new Set(t).add(f)));
  const changeMeta = (patch: Partial<MetaDraft>) => {
    setMeta((m) => ({ ...m, ...patch }));
    Object.keys(patch).forEach(touch);
    setServerFields({});
  };

  const pick = async () => {
    setPickError(null);
    setFromServer([]);
    try {
      const res = await DocumentPicker.getDocumentAsync({ type: PICKER_TYPES, multiple: false, base64: false, copyToCacheDirectory: false });
      if (res.canceled || !res.assets[0]) return;
      setReading(true);
      const p = await readPicked(res.assets[0], uploadLimit);
      setPicked(p);
      const a = p.analysed;
      if (a.kind === 'csv') {
        setMapping(a.mapping);
        // What the headers tell fills only fields the user has not written yet.
        const guess = guessMeta(a.table.headers, a.mapping);
        setMeta((m) => {
          const next = { ...m };
          if (guess.parameterName && !m.parameterName) next.parameterName = guess.parameterName;
          if (guess.parameterUnit && !m.parameterUnit) next.parameterUnit = guess.parameterUnit;
          if (guess.quantity && !touched.has('quantity') && !initialMeta) {
            next.quantity = guess.quantity;
            next.quantityUnit = guess.quantityUnit ?? '';
          }
          return next;
        });
      } else if (a.kind === 'json') {
        setMeta(draftFromMeta(a.meta));
      }
    } catch (e) {
      setPickError(e instanceof Error ? `The file could not be read: ${e.message}` : 'The file could not be read');
    } finally {
      setReading(false);
    }
  };

  const analysed = picked?.analysed;
  // A second parameter column (detected or mapped) makes the table a plane (two parameters).
  const converted = useMemo((): { curve?: Curve; theory?: Theory | null; plane?: Plane; problems: Problem[]; total?: number } => {
    if (!analysed || analysed.kind === 'invalid') return { problems: analysed?.problems ?? [], total: analysed?.total };
    if (analysed.kind === 'json') return { curve: analysed.curve, theory: analysed.theory, plane: analysed.plane, problems: analysed.problems, total: analysed.total };
    if (mapping.y !== undefined) return planeFromTable(analysed.table, mapping, meta.quantity);
    return curveFromTable(analysed.table, mapping);
  }, [analysed, mapping, meta.quantity]);
  const preview = useMemo((): { curve: Curve; theory: Theory | null } | { plane: Plane | null; theory?: undefined } | null => {
    if (analysed?.kind === 'csv') return mapping.y !== undefined ? { plane: converted.plane ?? null } : previewCurve(analysed.table, mapping);
    if (analysed?.kind === 'json') return analysed.plane ? { plane: analysed.plane } : { curve: analysed.curve!, theory: analysed.theory };
    return null;
  }, [analysed, mapping, converted.plane]);

  // Numeric columns without a role: named in the preview (they would not be stored).
  const notUsed = useMemo(() => (analysed?.kind === 'csv' ? unusedNumericColumns(analysed.table, mapping) : []), [analysed, mapping]);

  const metaCheck = useMemo(() => checkForm(versionMetaSchema, metaInput(meta)), [meta]);
  const noteCheck = useMemo(() => (isVersion ? checkForm(changeNoteSchema, { changeNote }) : { errors: {} as FieldErrors }), [isVersion, changeNote]);
  const allErrors: FieldErrors = { ...metaCheck.errors, ...noteCheck.errors };
  const shownErrors: FieldErrors = { ...serverFields, ...Object.fromEntries(Object.entries(allErrors).filter(([k]) => touched.has(k))) };
  const problems = converted.problems;
  const fileOk = !!picked?.file && analysed?.kind !== 'invalid' && problems.length === 0 && (!!converted.curve || !!converted.plane);
  const ready = fileOk && !!metaCheck.data && Object.keys(noteCheck.errors).length === 0;

  const missing: string[] = [];
  if (!picked) missing.push('Choose a file');
  else if (!fileOk) missing.push('Fix the problems in the file or the column roles');
  for (const [k, msg] of Object.entries(allErrors)) {
    const typed = k === 'changeNote' ? changeNote : meta[k as keyof MetaDraft];
    const why = typed === undefined || String(typed).trim() === '' ? 'required' : `${msg.charAt(0).toLowerCase()}${msg.slice(1)}`;
    missing.push(`${META_FIELD_LABELS[k as keyof typeof META_FIELD_LABELS] ?? k}: ${why}`);
  }

  const submit = () => {
    if (!ready || !picked?.file || !metaCheck.data) return;
    setFromServer([]);
    setServerFields({});
    const body = uploadForm({
      file: picked.file,
      fileName: picked.name,
      meta: metaCheck.data,
      mapping: analysed?.kind === 'csv' ? mapping : undefined,
      changeNote: isVersion ? changeNote.trim() : undefined,
      theoryLabel: preview && 'theory' in preview && preview.theory ? theoryLabel : undefined,
    });
    save.mutate(body, {
      onSuccess: (v) => router.replace(`/groups/${target.groupId}/results/${v.resultId}?v=${v.version}` as Href),
      onError: (err) => {
        const split = splitServerDetails(err);
        setFromServer(split.problems);
        setServerFields(split.fields);
      },
    });
  };

  const labels = axisLabels({ ...meta, parameterName: meta.parameterName || 'Parameter', quantityUnit: meta.quantity === 'mu' ? '' : meta.quantityUnit });
  const rowWord = analysed?.kind === 'json' ? 'Point' : 'Line';
  const mappingProblems = problems.filter(isMappingProblem);

  const fileStep = (
    <Step n={1} title="Choose a file" done={fileOk}>
      <Text variant="muted">
        A CSV table (comma, semicolon or tab between columns; any column names) or a Bandwright JSON file. At most {formatBytes(uploadLimit)}, UTF-8 text.
      </Text>
      <View style={styles.row}>
        <Button label={picked ? 'Choose another file' : 'Choose a file'} variant={picked ? 'secondary' : 'primary'} loading={reading} onPress={() => void pick()} />
      </View>
      {picked ? (
        <Text aria-label="Chosen file">
          <Text style={styles.strong}>{picked.name}</Text> · {formatBytes(picked.size)}
          {analysed?.kind === 'json' ? ' · Bandwright JSON: columns and provenance come from the file' : ''}
        </Text>
      ) : null}
      {pickError ? <Banner tone="error" message={pickError} /> : null}
      {analysed?.kind === 'invalid' ? <ProblemList problems={analysed.problems} total={analysed.total} title="This file cannot be used" rowWord={rowWord} /> : null}
    </Step>
  );

  const mappingStep =
    analysed?.kind === 'csv' ? (
      <Step n={2} title="Map the columns" done={fileOk}>
        <Text variant="muted">Roles were guessed from the column names. Check each one; a column can be left unused.</Text>
        {mappingProblems.length ? <ProblemList problems={mappingProblems} title="Check the column roles" /> : null}
        <MappingEditor table={analysed.table} mapping={mapping} onChange={setMapping} problems={problems} />
      </Step>
    ) : null;

  const previewCard = preview ? (
    <Card>
      <Text variant="title">Preview</Text>
      {analysed && analysed.kind !== 'invalid' ? (
        <PreviewStatus
          problems={problems}
          total={converted.total}
          rowWord={rowWord}
          points={converted.curve?.x.length ?? converted.plane?.x.length}
          headers={analysed.kind === 'csv' ? analysed.table.headers : []}
          notUsed={notUsed}
        />
      ) : null}
      {'curve' in preview ? <QuickPlot curve={preview.curve} theory={preview.theory} xLabel={labels.x} yLabel={labels.y} height={wide ? 300 : 240} /> : null}
      {'plane' in preview ? (
        preview.plane ? (
          <PlanePreview plane={preview.plane} contours={null} xLabel={labels.x} height={wide ? 320 : 260} />
        ) : (
          <Text variant="muted">A result over two parameters: the plane is drawn once its points are readable.</Text>
        )
      ) : null}
      {analysed?.kind === 'csv' ? <PreviewTable table={analysed.table} mapping={mapping} problems={problems} /> : null}
      {analysed?.kind === 'json' && analysed.plane ? <PlanePointsTable plane={analysed.plane} xTitle={parameterLabel({ parameterName: meta.parameterName || 'x', parameterUnit: meta.parameterUnit })} /> : null}
      {analysed?.kind === 'json' && analysed.curve ? <PointsTable curve={analysed.curve} theory={analysed.theory} xTitle={parameterLabel({ parameterName: meta.parameterName || 'x', parameterUnit: meta.parameterUnit })} /> : null}
    </Card>
  ) : null;

  const metaStep = (
    <Step n={analysed?.kind === 'csv' ? 3 : 2} title="Describe the result" done={!!metaCheck.data && Object.keys(noteCheck.errors).length === 0}>
      {isVersion ? (
        <TextField
          label={META_FIELD_LABELS.changeNote}
          hint="Shown in the version history, e.g. “full dataset, new jet calibration”."
          value={changeNote}
          onChangeText={(t) => {
            setChangeNote(t);
            touch('changeNote');
          }}
          error={shownErrors.changeNote}
        />
      ) : null}
      <MetaForm value={meta} onChange={changeMeta} errors={shownErrors} onTouch={touch} />
      {preview?.theory ? (
        <TextField
          label="Name of the theory curve"
          hint={`Shown in figure legends, e.g. “V′ benchmark (NLO)”.${preview.theory.label ? ` Empty: “${preview.theory.label}” from the file.` : ''}`}
          value={theoryLabel}
          onChangeText={setTheoryLabel}
          maxLength={120}
          error={serverFields.theoryLabel}
        />
      ) : null}
    </Step>
  );

  const saveCard = (
    <Card>
      {missing.length ? (
        <View style={styles.missing} aria-label="Still needed before saving">
          <Text variant="label">Before saving</Text>
          {missing.map((m) => (
            <Text key={m} variant="caption">
              • {m}
            </Text>
          ))}
        </View>
      ) : (
        <Text variant="muted">
          Everything is valid{notUsed.length ? ` (${notUsed.length === 1 ? 'one column with numbers is' : `${notUsed.length} columns with numbers are`} not used and will not be stored; see the preview)` : ''}. Saving stores a draft{isVersion ? ' version' : ''}; a curator or owner publishes it.
        </Text>
      )}
      <ProblemList problems={fromServer} title="The server refused the upload" rowWord={rowWord} />
      {save.error && fromServer.length === 0 && !Object.keys(serverFields).length ? <Banner tone="error" message={errorMessage(save.error)!} /> : null}
      <Button label={isVersion ? 'Save the new version' : 'Save the result'} disabled={!ready} loading={save.isPending} onPress={submit} />
    </Card>
  );

  if (wide) {
    return (
      <View style={styles.columns}>
        <View style={styles.main}>
          {fileStep}
          {mappingStep}
          {metaStep}
          {saveCard}
        </View>
        <View style={styles.side}>
          {previewCard ?? (
            <Card>
              <Text variant="title">Preview</Text>
              <Text variant="muted">The plot and the first rows appear here once a file is chosen.</Text>
            </Card>
          )}
        </View>
      </View>
    );
  }
  return (
    <View style={styles.stack}>
      {fileStep}
      {mappingStep}
      {previewCard}
      {metaStep}
      {saveCard}
    </View>
  );
}

/** `/results/new`: the first version of a new result, in the group the user works in. */
export function NewResultScreen() {
  const { group } = useCurrentGroup();
  const router = useRouter();
  if (!group) {
    return (
      <Screen title="Upload a result">
        <EmptyState title="No group yet" message="Results belong to a group. Create one first." action={<Button label="Create a group" onPress={() => router.push('/groups/new')} />} />
      </Screen>
    );
  }
  if (!can(group.role, 'result.write')) {
    return (
      <Screen title="Upload a result" subtitle={group.name}>
        <Banner tone="info" message={`As ${group.role} of ${group.name} you can read results but not upload them; analysts, curators and owners can.`} />
      </Screen>
    );
  }
  return (
    <Screen title="Upload a result" subtitle={`Into ${group.name} (switch groups at the top to upload elsewhere)`}>
      <UploadForm key={group.id} target={{ groupId: group.id, groupName: group.name }} />
    </Screen>
  );
}

/** `/groups/<group>/results/<result>/new-version`: a new draft version, starting from the newest one's provenance. */
export function NewVersionScreen() {
  const params = useLocalSearchParams<{ groupId: string; resultId: string }>();
  const groupId = String(params.groupId ?? '');
  const resultId = String(params.resultId ?? '');
  const me = useMe();
  const membership = me.data?.groups.find((g) => g.id === groupId);
  const detail = useResult(groupId, resultId);
  const latest = (detail.data?.versions ?? []).reduce((m, v) => Math.max(m, v.version), 0);
  const last = useResultVersion(groupId, resultId, latest || undefined);
  const [initial, setInitial] = useState<MetaDraft | null>(null);
  useEffect(() => {
    if (last.data && !initial) setInitial(draftFromMeta(last.data.meta));
  }, [last.data, initial]);

  const back = (
    <Link href={`/groups/${groupId}/results/${resultId}` as Href} style={styles.back}>
      ← Back to the result
    </Link>
  );
  if (membership && !can(membership.role, 'result.write')) {
    return (
      <Screen title="New version">
        {back}
        <Banner tone="info" message="Your role in this group cannot upload versions; analysts, curators and owners can." />
      </Screen>
    );
  }
  const error = detail.error ?? last.error;
  return (
    <Screen title="New version" subtitle={last.data ? `of “${last.data.meta.title}” (now v${latest})` : undefined}>
      {back}
      {error ? <Banner tone="error" message={errorMessage(error)!} /> : null}
      {!initial && !error ? <Loading label="Loading the result…" /> : null}
      {initial && membership ? <UploadForm target={{ groupId, groupName: membership.name, resultId, resultTitle: last.data?.meta.title }} initialMeta={initial} /> : null}
    </Screen>
  );
}

const styles = StyleSheet.create({
  columns: { flexDirection: 'row', gap: space.lg, alignItems: 'flex-start' },
  main: { flex: 1, gap: space.lg, minWidth: 0 },
  side: { flex: 1, gap: space.lg, minWidth: 0 },
  stack: { gap: space.lg },
  row: { flexDirection: 'row', gap: space.sm, flexWrap: 'wrap' },
  strong: { fontFamily: fonts.semibold },
  stepHead: { flexDirection: 'row', alignItems: 'center', gap: space.sm },
  stepNo: { width: 26, height: 26, borderRadius: 13, backgroundColor: colors.primary, alignItems: 'center', justifyContent: 'center' },
  stepDone: { backgroundColor: colors.success },
  stepNoText: { color: colors.primaryText, fontFamily: fonts.bold, fontSize: 13 },
  missing: { gap: 2 },
  back: { color: colors.primary, fontFamily: fonts.semibold, fontSize: 15, lineHeight: 22, alignSelf: 'flex-start' },
});
