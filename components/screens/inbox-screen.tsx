import { useState } from 'react';
import { useRouter } from 'expo-router';
import { Linking, Platform, Pressable, StyleSheet, View } from 'react-native';
import { useInbox } from '@/hooks/use-groups';
import { useMe } from '@/hooks/use-session';
import { colors, space } from '@/themes/tokens';
import { Banner } from '../ui/banner';
import { Card } from '../ui/card';
import { EmptyState } from '../ui/empty-state';
import { errorMessage } from '../ui/form';
import { Loading } from '../ui/loading';
import { Screen } from '../ui/screen';
import { Text } from '../ui/text';
import { formatDateTime } from '@/shared/dates';

const URL_RE = /(https?:\/\/[^\s]+)/g;

/** Mail text with its links made pressable (the text itself is never interpreted as HTML). */
function MailText({ text }: { text: string }) {
  const router = useRouter();
  const parts = text.split(URL_RE);
  // Links into this app open in place; anything else goes to the browser.
  const open = (url: string) => {
    const here = Platform.OS === 'web' && typeof window !== 'undefined' ? window.location.origin : null;
    if (here && url.startsWith(`${here}/`)) router.push(url.slice(here.length) as never);
    else void Linking.openURL(url);
  };
  return (
    <Text>
      {parts.map((p, i) =>
        /^https?:\/\//.test(p) ? (
          <Text key={i} role="link" style={styles.link} onPress={() => open(p)}>
            {p}
          </Text>
        ) : (
          <Text key={i}>{p}</Text>
        ),
      )}
    </Text>
  );
}

export function InboxScreen() {
  const me = useMe();
  const inbox = useInbox(!!me.data?.devTools);
  const [open, setOpen] = useState<string | null>(null);
  if (me.data && !me.data.devTools) {
    return (
      <Screen title="Inbox (development)">
        <Banner tone="info" message="The development inbox exists only when the server runs in development mode." />
      </Screen>
    );
  }
  return (
    <Screen title="Inbox (development)" subtitle={`Mail the app sent to ${me.data?.user.email ?? 'you'}; nothing leaves this machine.`}>
      {inbox.isPending ? <Loading label="Loading mail…" /> : null}
      {inbox.error ? <Banner tone="error" message={errorMessage(inbox.error)!} /> : null}
      {inbox.data?.length === 0 ? <EmptyState title="No mail yet" message="Invitations and notices sent to your address appear here." /> : null}
      <View style={styles.list}>
        {inbox.data?.map((m) => (
          <Card key={m.id}>
            <Pressable role="button" aria-expanded={open === m.id} aria-label={`Mail: ${m.subject}`} onPress={() => setOpen(open === m.id ? null : m.id)}>
              <Text variant="label">{m.subject}</Text>
              <Text variant="caption">{formatDateTime(m.createdAt)}</Text>
            </Pressable>
            {open === m.id ? <MailText text={m.text} /> : null}
          </Card>
        ))}
      </View>
    </Screen>
  );
}

const styles = StyleSheet.create({
  list: { gap: space.md },
  link: { color: colors.primary, textDecorationLine: 'underline' },
});
