import * as DocumentPicker from 'expo-document-picker';
import { useRouter } from 'expo-router';
import { useMemo, useState } from 'react';
import { StyleSheet, View } from 'react-native';
import { CsvFileError, decodeText } from '@/shared/curves/csv';
import { parseScanCsv } from '@/shared/scans/csv';
import { versionMetaSchema } from '@/shared/schemas/results';
import { scanFileSchema, type ScanInputPoint } from '@/shared/schemas/scans';
import { MIN_TAIL_TOYS, toysForBands } from '@/shared/stats/toys';
import { ApiError } from '@/shared/api-client';
import { useStartScan } from '@/hooks/use-scans';
import { useUploadLimit } from '@/hooks/use-limits';
import { space } from '@/themes/tokens';
import { Banner } from '../ui/banner';
import { Anchor } from '../ui/anchor';
import { Button } from '../ui/button';
import { Card } from '../ui/card';
import { ChoiceGroup } from '../ui/choice-group';
import { checkForm, errorMessage, type FieldErrors } from '../ui/form';
import { Text } from '../ui/text';
import { TextField } from '../ui/text-field';
import { MetaForm } from '../upload/meta-form';
import { ProblemList } from '../upload/problem-list';
import { EMPTY_META, metaInput, PICKER_TYPES, sizeProblem, type MetaDraft, type Problem } from '../upload/upload-model';
import { AsimovChoice } from './asimov-choice';
import { readNumber } from './model-draft';

type Picked = { name: string; file: Blob; points: ScanInputPoint[] } | { name: string; problems: Problem[] };

function analyse(name: string, bytes: Uint8Array): { points?: ScanInputPoint[]; problems: Problem[] } {
  try {
    const text = decodeText(bytes);
    if (/\.json$/i.test(name) || text.trimStart().startsWith('{')) {
      let raw: unknown;
      try {
        raw = JSON.parse(text);
      } catch (e) {
        return { problems: [{ column: 'file', reason: `is not valid JSON (${(e as Error).message})` }] };
      }
      const r = scanFileSchema.safeParse(raw);
      if (!r.success) return { problems: r.error.issues.slice(0, 50).map((i) => ({ column: i.path.join('.') || 'file', reason: i.message })) };
      return { points: r.data.points as ScanInputPoint[], problems: [] };
    }
    return { points: parseScanCsv(text), problems: [] };
  } catch (e) {
    if (e instanceof CsvFileError) return { problems: e.problems };
    throw e;
  }
}

/** Start a scan from a file (the scan CSV layout or the project's scan JSON), checked here first. */
export function ScanStart({ groupId }: { groupId: string }) {
  const router = useRouter();
  const start = useStartScan(groupId);
  const [picked, setPicked] = useState<Picked | null>(null);
  const uploadLimit = useUploadLimit();
  const [meta, setMeta] = useState<MetaDraft>({ ...EMPTY_META, method: 'asymptotic' });
  const [touched, setTouched] = useState<Set<string>>(new Set());
  const [method, setMethod] = useState<'asymptotic' | 'toys'>('asymptotic');
  const [asimov, setAsimov] = useState<'profiled' | 'nominal'>('profiled');
  // Untouched, the count follows the CL: enough for the −2σ band edge (toysForBands).
  const [toysTyped, setToys] = useState<string | null>(null);
  const [seed, setSeed] = useState('1');
  const [theoryLabel, setTheoryLabel] = useState('');
  const [serverProblems, setServerProblems] = useState<Problem[]>([]);

  const metaCheck = useMemo(() => checkForm(versionMetaSchema, metaInput({ ...meta, method })), [meta, method]);
  const shownMetaErrors: FieldErrors = Object.fromEntries(Object.entries(metaCheck.errors).filter(([k]) => touched.has(k)));
  const optionErrors: FieldErrors = {};
  const typedCl = readNumber(meta.cl);
  const cl = typedCl !== undefined && typedCl > 0 && typedCl < 1 ? typedCl : 0.95;
  const enough = toysForBands(1 - cl);
  const toys = toysTyped ?? String(enough);
  const toysN = readNumber(toys);
  const toysHint =
    toysN !== undefined && toysN < enough
      ? `Fewer than ${enough.toLocaleString('en')}: at ${+(cl * 100).toFixed(2)}% CL the −2σ band edge would rest on fewer than ${MIN_TAIL_TOYS} pseudo-experiments in its tail`
      : `Enough for the −2σ band edge at ${+(cl * 100).toFixed(2)}% CL (at least ${enough.toLocaleString('en')})`;
  if (method === 'toys' && (toysN === undefined || !Number.isInteger(toysN) || toysN < 100 || toysN > 1_000_000)) optionErrors.toys = 'A whole number from 100 to 1,000,000';
  const seedN = readNumber(seed);
  if (theoryLabel.trim().length > 120) optionErrors.theoryLabel = 'At most 120 characters';
  if (method === 'toys' && (seedN === undefined || !Number.isInteger(seedN) || seedN < 0)) optionErrors.seed = 'A whole number, 0 or more';

  const pick = async () => {
    setServerProblems([]);
    const r = await DocumentPicker.getDocumentAsync({ type: PICKER_TYPES, copyToCacheDirectory: false, multiple: false });
    if (r.canceled || !r.assets[0]) return;
    const asset = r.assets[0];
    const file = asset.file ?? (await (await fetch(asset.uri)).blob());
    const tooBig = sizeProblem(file.size, uploadLimit);
    if (tooBig) {
      setPicked({ name: asset.name, problems: [tooBig] });
      return;
    }
    const a = analyse(asset.name, new Uint8Array(await file.arrayBuffer()));
    setPicked(a.points ? { name: asset.name, file, points: a.points } : { name: asset.name, problems: a.problems });
  };

  const submit = () => {
    setTouched(new Set(Object.keys(metaCheck.errors).concat([...touched])));
    if (!picked || !('points' in picked) || !metaCheck.data || Object.keys(optionErrors).length) return;
    const form = new FormData();
    form.append('file', picked.file, picked.name);
    form.append('meta', JSON.stringify(metaCheck.data));
    form.append('options', JSON.stringify({ cl: metaCheck.data.cl, method, asimov, toys: toysN, seed: method === 'toys' ? seedN : 1 }));
    if (theoryLabel.trim()) form.append('theoryLabel', theoryLabel.trim());
    start.mutate(form, {
      onSuccess: (scan) => router.push(`/groups/${groupId}/scans/${scan.id}`),
      onError: (e) => setServerProblems(e instanceof ApiError ? e.details.map((d) => ({ column: d.field, reason: d.message })) : []),
    });
  };

  const points = picked && 'points' in picked ? picked.points : null;
  const xs = points?.map((p) => p.x) ?? [];
  return (
    <View style={styles.col}>
      <Card>
        <Text variant="title">1. Scan file</Text>
        <Text variant="muted">
          One row per grid point and bin: x, sigma_nominal (optional), bin, observed, signal, background:&lt;name&gt;…, systematic:&lt;name&gt;:&lt;process&gt;… — or the project&apos;s scan JSON.
        </Text>
        <View style={styles.row}>
          <Anchor href="/examples/scan-example.csv" download>
            Example scan CSV
          </Anchor>
          <Anchor href="/examples/scan-example.json" download>
            Example scan JSON
          </Anchor>
        </View>
        <Button label={picked ? 'Choose another file' : 'Choose a scan file'} variant={picked ? 'secondary' : 'primary'} onPress={() => void pick()} style={styles.start} />
        {picked && 'problems' in picked ? <ProblemList problems={picked.problems} title={`${picked.name} cannot be used`} /> : null}
        {points ? (
          <Banner
            tone="success"
            message={`${picked!.name}: ${points.length} grid points from ${Math.min(...xs)} to ${Math.max(...xs)}, ${points[0]!.model.observed.length} bins each${points.every((p) => p.sigmaNominal !== undefined) ? ', nominal σ×B given' : ''}.`}
          />
        ) : null}
      </Card>
      <Card>
        <Text variant="title">2. How to compute</Text>
        <ChoiceGroup<'asymptotic' | 'toys'>
          label="Method"
          value={method}
          onChange={(m) => {
            setMethod(m);
            setMeta((d) => ({ ...d, method: m }));
          }}
          choices={[
            { value: 'asymptotic', label: 'Asymptotic CLs' },
            { value: 'toys', label: 'Pseudo-experiments' },
          ]}
        />
        <AsimovChoice value={asimov} onChange={setAsimov} />
        <View style={styles.row}>
          {method === 'toys' ? (
            <View style={styles.grow}>
              <TextField label="Pseudo-experiments per hypothesis" value={toys} onChangeText={setToys} inputMode="numeric" error={optionErrors.toys} hint={toysHint} />
            </View>
          ) : null}
          {method === 'toys' ? (
            <View style={styles.grow}>
              <TextField label="Seed" value={seed} onChangeText={setSeed} inputMode="numeric" error={optionErrors.seed} hint="Point i uses seed + i" />
            </View>
          ) : null}
        </View>
      </Card>
      <Card>
        <Text variant="title">3. What the draft result will say</Text>
        <MetaForm value={{ ...meta, method }} onChange={(p) => setMeta((d) => ({ ...d, ...p }))} errors={shownMetaErrors} onTouch={(f) => setTouched((s) => new Set(s).add(f))} />
        {points?.some((p) => p.sigmaNominal !== undefined) ? (
          <TextField
            label="Name of the theory curve (optional)"
            value={theoryLabel}
            onChangeText={setTheoryLabel}
            error={optionErrors.theoryLabel}
            hint="The points' nominal σ×B becomes the draft's theory curve; TeX allowed, e.g. $g_V = 1$"
          />
        ) : null}
      </Card>
      {serverProblems.length ? <ProblemList problems={serverProblems} title="The server refused the scan" /> : null}
      {start.error && !serverProblems.length ? <Banner tone="error" message={errorMessage(start.error)!} /> : null}
      <Button label="Start the scan" onPress={submit} loading={start.isPending} disabled={!picked || !('points' in picked)} style={styles.start} />
      {picked && 'points' in picked && Object.keys(metaCheck.errors).length ? <Text variant="caption">Fill in the fields of step 3 to start.</Text> : null}
    </View>
  );
}

const styles = StyleSheet.create({
  col: { gap: space.lg },
  row: { flexDirection: 'row', flexWrap: 'wrap', gap: space.md },
  grow: { flexGrow: 1, flexBasis: 160 },
  start: { alignSelf: 'flex-start' },
});
