import { useLocalSearchParams, useRouter } from 'expo-router';
import { ROLE_DESCRIPTIONS, ROLE_LABELS } from '@/shared/access';
import { useCurrentGroup } from '@/hooks/use-current-group';
import { useAcceptInvitation, useInvitationPreview } from '@/hooks/use-groups';
import { useMe } from '@/hooks/use-session';
import { ApiError } from '@/shared/api-client';
import { VerifyAddress } from '../account/verify-address';
import { Banner } from '../ui/banner';
import { Button } from '../ui/button';
import { errorMessage } from '../ui/form';
import { Loading } from '../ui/loading';
import { Text } from '../ui/text';
import { AuthFrame } from './auth-form';

export function InvitationScreen() {
  const { token } = useLocalSearchParams<{ token: string }>();
  const preview = useInvitationPreview(token ?? '');
  const me = useMe();
  const accept = useAcceptInvitation(token ?? '');
  const router = useRouter();
  const { select } = useCurrentGroup();
  const next = `/invite/${token}`;

  if (preview.isPending || me.isPending) return <AuthFrame title="Invitation"><Loading /></AuthFrame>;
  if (preview.error) return <AuthFrame title="Invitation"><Banner tone="error" message={errorMessage(preview.error)!} /></AuthFrame>;
  const inv = preview.data!;
  const signedIn = !!me.data;
  const wrongUser = signedIn && me.data!.user.email.toLowerCase() !== inv.email.toLowerCase();
  // The server refuses an unverified address too (403 email_unverified); this only shows why first.
  const unverified = signedIn && !wrongUser && !me.data!.user.emailVerified;

  return (
    <AuthFrame title={`Join ${inv.groupName}`}>
      <Text>
        {inv.invitedBy ? `${inv.invitedBy} invited ` : 'You are invited: '}
        {inv.email} to join as {ROLE_LABELS[inv.role].toLowerCase()}.
      </Text>
      <Text variant="caption">{ROLE_DESCRIPTIONS[inv.role]}</Text>
      {inv.state !== 'pending' ? <Banner tone="warning" message={`This invitation is ${inv.state}.`} /> : null}
      {inv.state === 'pending' && !signedIn ? (
        <>
          <Button label="Sign in to accept" onPress={() => router.push({ pathname: '/sign-in', params: { next, email: inv.email } })} />
          <Button variant="secondary" label="Create an account to accept" onPress={() => router.push({ pathname: '/sign-up', params: { next, email: inv.email } })} />
        </>
      ) : null}
      {inv.state === 'pending' && wrongUser ? (
        <Banner tone="warning" message={`You are signed in as ${me.data!.user.email}. Sign in as ${inv.email} to accept this invitation.`} />
      ) : null}
      {inv.state === 'pending' && unverified ? (
        <VerifyAddress
          email={me.data!.user.email}
          callbackURL={next}
          why="Invitations can only be accepted from a verified address."
          devTools={me.data!.devTools}
        />
      ) : null}
      {inv.state === 'pending' && signedIn && !wrongUser && !unverified ? (
        <Button
          label="Accept invitation"
          loading={accept.isPending}
          onPress={() =>
            accept.mutate(undefined, {
              onSuccess: ({ groupId }) => {
                select(groupId);
                router.replace('/members');
              },
              // Verified state seen here was stale: refetch it, which shows the notice above.
              onError: (err) => {
                if (err instanceof ApiError && err.code === 'email_unverified') void me.refetch();
              },
            })
          }
        />
      ) : null}
      {accept.error && !unverified ? <Banner tone="error" message={errorMessage(accept.error)!} /> : null}
    </AuthFrame>
  );
}
