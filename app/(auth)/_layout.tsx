import { Redirect, Slot, useLocalSearchParams } from 'expo-router';
import { safeNext } from '@/components/screens/sign-in-screen';
import { Loading } from '@/components/ui/loading';
import { useMe } from '@/hooks/use-session';

/** Signed-out screens; a signed-in visitor goes on to where they were heading. */
export default function AuthLayout() {
  const me = useMe();
  const { next } = useLocalSearchParams<{ next?: string }>();
  if (me.isPending) return <Loading />;
  if (me.data) return <Redirect href={safeNext(next) as never} />;
  return <Slot />;
}
