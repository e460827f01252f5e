import { Redirect, Slot, usePathname } from 'expo-router';
import { AppShell } from '@/components/nav/app-shell';
import { Banner } from '@/components/ui/banner';
import { errorMessage } from '@/components/ui/form';
import { Loading } from '@/components/ui/loading';
import { useMe } from '@/hooks/use-session';

/** Signed-in screens. This guard only hides screens; the server decides what anyone may see. */
export default function AppLayout() {
  const me = useMe();
  const pathname = usePathname();
  if (me.isPending) return <Loading />;
  if (me.error) return <Banner tone="error" message={errorMessage(me.error)!} />;
  if (!me.data) return <Redirect href={{ pathname: '/sign-in', params: pathname !== '/' ? { next: pathname } : {} }} />;
  return (
    <AppShell>
      <Slot />
    </AppShell>
  );
}
