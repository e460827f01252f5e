import { Link, useLocalSearchParams, useRouter, type Href } from 'expo-router';
import { useState } from 'react';
import { StyleSheet, View } from 'react-native';
import { can, type GroupRole } from '@/shared/access';
import { ApiError } from '@/shared/api-client';
import { retractSchema, type ResultDetail, type ResultVersion } from '@/shared/schemas/results';
import { api } from '@/hooks/api';
import { useCreateEnvelope, useDeleteDraft, usePublishVersion, useResult, useResultVersion, useRetractVersion, useSetVisibility } from '@/hooks/use-results';
import { useMe } from '@/hooks/use-session';
import { colors, fonts, space } from '@/themes/tokens';
import { permalinkPath } from '../results/format';
import { ResultView } from '../results/result-view';
import { VersionHistory } from '../results/version-history';
import { Banner } from '../ui/banner';
import { Button } from '../ui/button';
import { Card } from '../ui/card';
import { Checkbox } from '../ui/checkbox';
import { EmptyState } from '../ui/empty-state';
import { checkForm, errorMessage, serverFieldErrors, type FieldErrors } from '../ui/form';
import { Loading } from '../ui/loading';
import { Screen } from '../ui/screen';
import { Text } from '../ui/text';
import { TextField } from '../ui/text-field';

/** What the caller's role in the result's group lets them do with the shown version. */
export function ResultActions({ detail, version, role }: { detail: ResultDetail; version: ResultVersion; role: GroupRole | undefined }) {
  const router = useRouter();
  const { groupId, id: resultId } = detail;
  const publish = usePublishVersion(groupId, resultId);
  const retract = useRetractVersion(groupId, resultId);
  const visibility = useSetVisibility(groupId, resultId);
  const remove = useDeleteDraft(groupId, resultId);
  const [makePublic, setMakePublic] = useState(detail.isPublic);
  const [retracting, setRetracting] = useState(false);
  const [reason, setReason] = useState('');
  const [errors, setErrors] = useState<FieldErrors>({});
  const [confirmDelete, setConfirmDelete] = useState(false);
  const [confirmPublish, setConfirmPublish] = useState(false);
  const mayWrite = can(role, 'result.write');
  const mayPublish = can(role, 'result.publish');
  const hasPublished = detail.versions.some((v) => v.state === 'published' || v.state === 'superseded');
  if (!mayWrite) return null;

  const submitRetract = () => {
    const { data, errors: e } = checkForm(retractSchema, { reason });
    setErrors(e);
    if (!data) return;
    retract.mutate(
      { version: version.version, reason: data.reason },
      { onSuccess: () => setRetracting(false), onError: (err) => setErrors(serverFieldErrors(err)) },
    );
  };
  const error = publish.error ?? retract.error ?? visibility.error ?? remove.error;
  return (
    <Card>
      <Text variant="title">Actions</Text>
      {version.state === 'draft' && mayPublish ? (
        <View style={styles.block}>
          <Checkbox label="Make the result public" hint="Anyone, signed in or not, can then open and download its published versions." checked={makePublic} onChange={setMakePublic} />
          {confirmPublish ? (
            <View style={styles.block} role="alertdialog" aria-label={`Publish version ${version.version}?`}>
              <Text>
                {`Publish version ${version.version}${makePublic ? ' for everyone' : ' for the group'}? This is permanent: a published version never changes and can only be retracted, with a reason everyone sees.`}
              </Text>
              <View style={styles.row}>
                <Button
                  label="Publish now"
                  loading={publish.isPending}
                  onPress={() => publish.mutate({ version: version.version, isPublic: makePublic }, { onSettled: () => setConfirmPublish(false) })}
                />
                <Button variant="ghost" label="Not yet" onPress={() => setConfirmPublish(false)} />
              </View>
            </View>
          ) : (
            <Button label={`Publish version ${version.version}…`} accessibilityLabel={`Publish version ${version.version}`} onPress={() => setConfirmPublish(true)} />
          )}
          <Text variant="caption">Published versions never change; a later version supersedes this one. The author is told by mail.</Text>
        </View>
      ) : null}
      {version.state === 'draft' && !mayPublish ? <Text variant="muted">A curator or owner of the group publishes drafts; they were told by mail that this one awaits review.</Text> : null}
      {version.state === 'published' && mayPublish ? (
        retracting ? (
          <View style={styles.block}>
            <TextField
              label="Reason for the retraction"
              hint="Shown to everyone who opens this result."
              value={reason}
              onChangeText={setReason}
              multiline
              numberOfLines={3}
              error={errors.reason}
            />
            <View style={styles.row}>
              <Button variant="danger" label={`Retract version ${version.version}`} loading={retract.isPending} onPress={submitRetract} />
              <Button variant="ghost" label="Cancel" onPress={() => setRetracting(false)} />
            </View>
          </View>
        ) : (
          <Button variant="secondary" label={`Retract version ${version.version}…`} accessibilityLabel={`Retract version ${version.version}`} onPress={() => setRetracting(true)} />
        )
      ) : null}
      {mayPublish && hasPublished ? (
        <Button
          variant="secondary"
          label={detail.isPublic ? 'Make group-only' : 'Make public'}
          loading={visibility.isPending}
          onPress={() => visibility.mutate(!detail.isPublic)}
        />
      ) : null}
      <Button variant="secondary" label="Upload a new version" onPress={() => router.push(`/groups/${groupId}/results/${resultId}/new-version` as Href)} />
      {version.state === 'draft' ? (
        confirmDelete ? (
          <View style={styles.block}>
            <Text>
              Delete draft version {version.version}
              {detail.versions.length === 1 ? ' and with it the result' : ''}? This cannot be undone.
            </Text>
            <View style={styles.row}>
              <Button
                variant="danger"
                label="Delete draft"
                loading={remove.isPending}
                onPress={() =>
                  remove.mutate(
                    { version: version.version, onlyVersion: detail.versions.length === 1 },
                    {
                      onSuccess: () => {
                        setConfirmDelete(false);
                        if (detail.versions.length === 1) router.replace('/');
                        else router.setParams({ v: undefined });
                      },
                    },
                  )
                }
              />
              <Button variant="ghost" label="Keep it" onPress={() => setConfirmDelete(false)} />
            </View>
          </View>
        ) : (
          <Button variant="ghost" label="Delete this draft…" accessibilityLabel={`Delete draft version ${version.version}`} onPress={() => setConfirmDelete(true)} />
        )
      ) : null}
      {error && !Object.keys(errors).length ? <Banner tone="error" message={errorMessage(error)!} /> : null}
    </Card>
  );
}

/** A result of one of the caller's groups, at `/groups/<group>/results/<result>?v=<version>`. */
/** Where a computed version came from: a link to its scan's diagnostics and the points that warned or failed. */
export function ScanOrigin({ groupId, origin, unit }: { groupId: string; origin: NonNullable<ResultVersion['fromScan']>; unit: string }) {
  const problems = origin.points;
  return (
    <Card>
      <Text variant="title">Computed by a scan</Text>
      <Link href={`/groups/${groupId}/scans/${origin.scanId}` as Href} style={styles.link} accessibilityHint="Opens the scan's progress and per-point diagnostics">
        Open the scan's diagnostics →
      </Link>
      {problems.length === 0 ? (
        <Text variant="muted">No grid point warned.</Text>
      ) : (
        <View style={styles.block} accessibilityLabel={`${problems.length} grid points with warnings`}>
          <Text>
            {problems.length === 1 ? '1 grid point' : `${problems.length} grid points`} need a look before publishing:
          </Text>
          {problems.map((p) => (
            <Text key={p.index} style={p.error ? styles.failed : undefined}>
              {`x = ${p.x}${unit ? ` ${unit}` : ''}: ${[...(p.error ? [`failed (${p.error})`] : []), ...p.warnings].join('; ')}`}
            </Text>
          ))}
        </View>
      )}
    </Card>
  );
}

/**
 * The inputs a derived version (a best-expected envelope) was built from, each linked to its
 * permanent link, with a note where a newer published version exists, and for writers "rebuild
 * from the latest inputs" (a new version; this one stays).
 */
export function EnvelopeInputs({ groupId, version, role, onRebuilt }: { groupId: string; version: ResultVersion; role: GroupRole | undefined; onRebuilt: (v: number) => void }) {
  const rebuild = useCreateEnvelope(groupId);
  const inputs = version.inputs ?? [];
  const newer = inputs.filter((i) => i.resultId && i.latestPublished !== null && i.latestPublished > i.version);
  const gone = inputs.filter((i) => !i.resultId);
  const submit = () =>
    rebuild.mutate(
      {
        resultId: version.resultId,
        inputs: inputs.flatMap((i) => (i.resultId ? [{ resultId: i.resultId, version: i.latestPublished !== null && i.latestPublished > i.version ? i.latestPublished : i.version }] : [])),
      },
      { onSuccess: (v) => onRebuilt(v.version) },
    );
  return (
    <Card>
      <Text variant="title">Built from {inputs.length} inputs</Text>
      <View style={styles.block} role="list" aria-label="Inputs of this envelope">
        {inputs.map((i) => (
          <View key={i.position} role="listitem" style={styles.inputRow}>
            {i.slug ? (
              <Link href={permalinkPath(i.slug, i.version) as Href} style={styles.link}>
                {`${i.position + 1}. ${i.title} v${i.version}`}
              </Link>
            ) : (
              <Text>{`${i.position + 1}. ${i.title} v${i.version} (no longer available to this group)`}</Text>
            )}
            {i.resultId && i.latestPublished !== null && i.latestPublished > i.version ? <Text variant="caption">{`Version ${i.latestPublished} is published`}</Text> : null}
          </View>
        ))}
      </View>
      {newer.length ? (
        <Banner tone="warning" message={`${newer.length === 1 ? 'One input has' : `${newer.length} inputs have`} a newer published version than the one used here.`} />
      ) : null}
      {gone.length ? <Banner tone="warning" message="An input is no longer available to this group; a rebuild leaves it out." /> : null}
      {newer.length && can(role, 'result.write') ? (
        <Button variant="secondary" label="Rebuild from the latest inputs" loading={rebuild.isPending} onPress={submit} accessibilityHint="Adds a new draft version built from the newest published inputs; this version stays" />
      ) : null}
      {rebuild.error ? <Banner tone="error" message={errorMessage(rebuild.error)!} /> : null}
    </Card>
  );
}

export function ResultScreen() {
  const params = useLocalSearchParams<{ groupId: string; resultId: string; v?: string }>();
  const groupId = String(params.groupId ?? '');
  const resultId = String(params.resultId ?? '');
  const router = useRouter();
  const me = useMe();
  const role = me.data?.groups.find((g) => g.id === groupId)?.role;
  const detail = useResult(groupId, resultId);
  const versions = detail.data?.versions ?? [];
  const latest = versions.reduce((m, v) => Math.max(m, v.version), 0);
  const asked = Number(params.v);
  const selected = versions.some((v) => v.version === asked) ? asked : latest;
  const version = useResultVersion(groupId, resultId, selected || undefined);

  const back = (
    <Link href="/" style={styles.back}>
      ← All results
    </Link>
  );
  const notFound = [detail.error, version.error].some((e) => e instanceof ApiError && (e.status === 404 || e.status === 400));
  if (notFound) {
    return (
      <Screen title="Result not found">
        {back}
        <EmptyState title="No such result" message="It may have been deleted, or it belongs to a group you are not in." />
      </Screen>
    );
  }
  const v = version.data;
  return (
    <Screen title={v?.meta.title ?? 'Result'} subtitle={v?.meta.model || undefined}>
      {back}
      {detail.error || version.error ? <Banner tone="error" message={errorMessage(detail.error ?? version.error)!} /> : null}
      {detail.isPending || (version.isPending && !!selected) ? <Loading label="Loading the result…" /> : null}
      {detail.data && v ? (
        <ResultView
          version={v}
          downloads={{
            csv: api.results.exportUrl(groupId, resultId, v.version, 'csv'),
            json: api.results.exportUrl(groupId, resultId, v.version, 'json'),
            ...(v.plane ? { contours: { csv: api.results.contoursUrl(groupId, resultId, v.version, 'csv'), json: api.results.contoursUrl(groupId, resultId, v.version, 'json') } } : {}),
          }}
          side={
            <>
              <ResultActions detail={detail.data} version={v} role={role} />
              {v.fromScan ? <ScanOrigin groupId={groupId} origin={v.fromScan} unit={v.meta.parameterUnit} /> : null}
              {v.inputs ? <EnvelopeInputs groupId={groupId} version={v} role={role} onRebuilt={(n) => router.setParams({ v: String(n) })} /> : null}
              <Card>
                <Text variant="title">Versions</Text>
                <VersionHistory versions={versions} selected={v.version} onSelect={(n) => router.setParams({ v: String(n) })} />
              </Card>
            </>
          }
        />
      ) : null}
    </Screen>
  );
}

const styles = StyleSheet.create({
  block: { gap: space.sm },
  inputRow: { gap: 2 },
  row: { flexDirection: 'row', gap: space.sm, flexWrap: 'wrap' },
  failed: { color: colors.danger },
  link: { color: colors.primary, fontFamily: fonts.semibold, fontSize: 15, lineHeight: 22 },
  back: { color: colors.primary, fontFamily: fonts.semibold, fontSize: 15, lineHeight: 22, alignSelf: 'flex-start' },
});
