import { useLocalSearchParams, useRouter } from 'expo-router';
import { useEffect, useRef } from 'react';
import { ApiError } from '@/shared/api-client';
import { useMe, useVerifyEmail } from '@/hooks/use-session';
import { VerifyAddress } from '../account/verify-address';
import { Banner } from '../ui/banner';
import { Button } from '../ui/button';
import { errorMessage } from '../ui/form';
import { Loading } from '../ui/loading';
import { Text } from '../ui/text';
import { AuthFrame } from './auth-form';
import { safeNext } from './sign-in-screen';

function linkProblem(error: unknown): string {
  if (error instanceof ApiError && error.code === 'token_expired') return 'This verification link has expired.';
  if (error instanceof ApiError && error.status === 401) return 'This verification link is not valid: it was cut short, changed, or its account no longer exists.';
  return errorMessage(error) ?? 'The address could not be verified.';
}

/**
 * Where the verification mail's link leads: confirms the token once on opening, then offers the
 * way on (`next`: back to the invitation that asked for it, by default home).
 */
export function VerifyEmailScreen() {
  const { token, next } = useLocalSearchParams<{ token?: string; next?: string }>();
  const router = useRouter();
  const me = useMe();
  const verify = useVerifyEmail();
  const started = useRef(false);
  const goOn = safeNext(next);

  useEffect(() => {
    if (!token || started.current) return;
    started.current = true;
    verify.mutate(token);
  }, [token, verify]);

  const user = me.data?.user;
  return (
    <AuthFrame title="Verify your address">
      {!token ? <Banner tone="error" message="This link has no token. Open the whole link from the verification mail." /> : null}
      {verify.isPending || (verify.isSuccess && me.isFetching) ? <Loading label="Verifying your address…" /> : null}
      {verify.isSuccess && !me.isFetching ? (
        <>
          <Banner tone="success" message={user ? `Your address ${user.email} is verified.` : 'Your address is verified.'} />
          {user ? (
            <Button label={goOn.startsWith('/invite/') ? 'Back to the invitation' : 'Continue'} onPress={() => router.replace(goOn as never)} />
          ) : (
            <Button label="Sign in to continue" onPress={() => router.replace({ pathname: '/sign-in', params: goOn !== '/' ? { next: goOn } : {} })} />
          )}
        </>
      ) : null}
      {verify.error ? (
        <>
          <Banner tone="error" message={linkProblem(verify.error)} />
          {user && !user.emailVerified ? (
            <VerifyAddress email={user.email} callbackURL={goOn} why="A new link can be sent." devTools={me.data?.devTools} />
          ) : null}
          {user?.emailVerified ? <Button label="Continue" onPress={() => router.replace(goOn as never)} /> : null}
          {!user && !me.isPending ? (
            <>
              <Text>Sign in to have a new verification mail sent.</Text>
              <Button label="Sign in" onPress={() => router.replace({ pathname: '/sign-in', params: goOn !== '/' ? { next: goOn } : {} })} />
            </>
          ) : null}
        </>
      ) : null}
    </AuthFrame>
  );
}
