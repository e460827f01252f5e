import { useRouter } from 'expo-router';
import { useCurrentGroup } from '@/hooks/use-current-group';
import { Button } from '../ui/button';
import { EmptyState } from '../ui/empty-state';
import { Screen } from '../ui/screen';

export function ResultsHomeScreen() {
  const { group, can } = useCurrentGroup();
  const router = useRouter();
  if (!group) {
    return (
      <Screen title="Welcome to Bandwright">
        <EmptyState
          title="You are not in a group yet"
          message="Results and figures belong to groups. Create one for your analysis team, or ask a group's owner or curator to invite you."
          action={<Button label="Create a group" onPress={() => router.push('/groups/new')} />}
        />
      </Screen>
    );
  }
  return (
    <Screen title="Results" subtitle={group.name}>
      <EmptyState
        title="No results yet"
        message={
          can('result.write')
            ? 'Limit results of this group will be listed here: upper limits with their expected bands, versions and provenance.'
            : 'When analysts of this group add limit results, they will be listed here.'
        }
      />
    </Screen>
  );
}
