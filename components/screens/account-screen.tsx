import { Link, useRouter } from 'expo-router';
import { StyleSheet } from 'react-native';
import { colors, fonts } from '@/themes/tokens';
import { useMe, useSignOut } from '@/hooks/use-session';
import { ROLE_LABELS } from '@/shared/access';
import { VerifyAddress } from '../account/verify-address';
import { Anchor } from '../ui/anchor';
import { Banner } from '../ui/banner';
import { Button } from '../ui/button';
import { Card } from '../ui/card';
import { errorMessage } from '../ui/form';
import { Screen } from '../ui/screen';
import { Text } from '../ui/text';

export function AccountScreen() {
  const me = useMe();
  const signOut = useSignOut();
  const router = useRouter();
  const user = me.data?.user;
  return (
    <Screen title="Account">
      <Card>
        <Text variant="title">{user?.name}</Text>
        <Text variant="muted">{user?.email}</Text>
        {user?.emailVerified ? <Text variant="caption">Address verified</Text> : null}
        {user && !user.emailVerified ? (
          <VerifyAddress email={user.email} callbackURL="/account" why="You need a verified address to accept invitations." devTools={me.data?.devTools} />
        ) : null}
      </Card>
      <Card>
        <Text variant="label">Your groups</Text>
        {(me.data?.groups ?? []).length === 0 ? <Text variant="muted">None yet.</Text> : null}
        {(me.data?.groups ?? []).map((g) => (
          <Text key={g.id}>
            {g.name} — {ROLE_LABELS[g.role]}
          </Text>
        ))}
      </Card>
      <Card>
        <Text variant="label">Storage plan</Text>
        <Text variant="muted">Your group's plan, its storage use and, for owners, upgrades, billing and invoices.</Text>
        <Link href="/plan" style={styles.link}>
          Plan and storage
        </Link>
      </Card>
      <Card>
        <Text variant="label">API tokens</Text>
        <Text variant="muted">Personal tokens let your scripts and pipelines push results as you.</Text>
        <Link href="/tokens" style={styles.link}>
          Manage API tokens
        </Link>
        <Text variant="muted">Every route, who may call it and what it takes, for pipeline authors.</Text>
        <Anchor href="/api/docs" newTab label="API reference (opens in a new tab)" style={styles.link}>
          API reference
        </Anchor>
      </Card>
      {signOut.error ? <Banner tone="error" message={errorMessage(signOut.error)!} /> : null}
      <Button
        label="Sign out"
        variant="secondary"
        loading={signOut.isPending}
        onPress={() => signOut.mutate(undefined, { onSuccess: () => router.replace('/sign-in') })}
      />
    </Screen>
  );
}

const styles = StyleSheet.create({
  link: { color: colors.primary, fontFamily: fonts.semibold, fontSize: 15, lineHeight: 22, alignSelf: 'flex-start' },
});
