import { Link } from 'expo-router';
import { useState } from 'react';
import { Pressable, StyleSheet, View } from 'react-native';
import { useCurrentGroup } from '@/hooks/use-current-group';
import { useScans } from '@/hooks/use-scans';
import { colors, space } from '@/themes/tokens';
import { QuickLimit } from '../compute/quick-limit';
import { ScanStart } from '../compute/scan-start';
import { Banner } from '../ui/banner';
import { Card } from '../ui/card';
import { ChoiceGroup } from '../ui/choice-group';
import { EmptyState } from '../ui/empty-state';
import { errorMessage } from '../ui/form';
import { Loading } from '../ui/loading';
import { Screen } from '../ui/screen';
import { Text } from '../ui/text';
import { formatDateTime } from '@/shared/dates';

type Tab = 'quick' | 'scan' | 'recent';

function RecentScans({ groupId }: { groupId: string }) {
  const scans = useScans(groupId);
  if (scans.isPending) return <Loading label="Loading scans…" />;
  if (scans.error) return <Banner tone="error" message={errorMessage(scans.error)!} />;
  if (!scans.data?.length) return <EmptyState title="No scans yet" message="Scans you start from a file appear here, with their progress." />;
  return (
    <View style={styles.list} role="list">
      {scans.data.map((s) => (
        <Link key={s.id} href={`/groups/${groupId}/scans/${s.id}`} asChild>
          <Pressable role="link" aria-label={`Scan ${s.title}, ${s.state}, ${s.donePoints + s.failedPoints} of ${s.totalPoints} points`} style={styles.item}>
            <Text variant="label">{s.title}</Text>
            <Text variant="caption">
              {s.state} · {s.donePoints + s.failedPoints}/{s.totalPoints} points{s.failedPoints ? ` (${s.failedPoints} failed)` : ''} · started {formatDateTime(s.createdAt)}
            </Text>
          </Pressable>
        </Link>
      ))}
    </View>
  );
}

/** Compute limits from event counts: a small model in the browser, or a scan on the job queue. */
export function ComputeScreen() {
  const { group, can } = useCurrentGroup();
  const canScan = can('result.write');
  const [tab, setTab] = useState<Tab>('quick');
  return (
    <Screen title="Compute limits" subtitle="CLs upper limits from event counts, signal and background yields, and their uncertainties.">
      <ChoiceGroup<Tab>
        label="What to do"
        value={tab}
        onChange={setTab}
        choices={[
          { value: 'quick', label: 'Quick limit' },
          { value: 'scan', label: 'Scan a grid', disabled: !group || !canScan },
          { value: 'recent', label: 'Scans', disabled: !group },
        ]}
      />
      {tab === 'scan' && group && !canScan ? <Banner tone="info" message="Your role in this group cannot start scans; analysts, curators and owners can." /> : null}
      {tab === 'quick' ? <QuickLimit /> : null}
      {tab === 'scan' && group && canScan ? <ScanStart groupId={group.id} /> : null}
      {tab === 'recent' && group ? (
        <Card>
          <Text variant="title">Scans of {group.name}</Text>
          <RecentScans groupId={group.id} />
        </Card>
      ) : null}
    </Screen>
  );
}

const styles = StyleSheet.create({
  list: { gap: space.sm },
  item: { paddingVertical: space.sm, borderBottomWidth: 1, borderBottomColor: colors.border, gap: 2 },
});
