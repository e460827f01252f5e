import type { ReactNode } from 'react';
import { can } from '@/shared/access';
import type { useCurrentGroup } from '@/hooks/use-current-group';
import { Banner } from '../ui/banner';
import { Button } from '../ui/button';
import { EmptyState } from '../ui/empty-state';
import { Screen } from '../ui/screen';

/**
 * The screen for a caller who cannot build a derived result here: no group yet, or a role that
 * may only read. `null` when the caller may write results in the group (the screen goes on).
 */
export function writerGate(group: ReturnType<typeof useCurrentGroup>['group'], router: { push: (href: '/groups/new') => void }, words: { title: string; what: string; verb: string }): ReactNode {
  const { title, what, verb } = words;
  if (!group) {
    return (
      <Screen title={title}>
        <EmptyState title="No group yet" message={`${what} is stored as a result of a group. Create one first.`} action={<Button label="Create a group" onPress={() => router.push('/groups/new')} />} />
      </Screen>
    );
  }
  if (!can(group.role, 'result.write')) {
    return (
      <Screen title={title} subtitle={group.name}>
        <Banner tone="info" message={`As ${group.role} of ${group.name} you can read results but not ${verb}; analysts, curators and owners can.`} />
      </Screen>
    );
  }
  return null;
}
