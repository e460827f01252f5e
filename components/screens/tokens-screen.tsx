import { useState } from 'react';
import { StyleSheet, View } from 'react-native';
import { createTokenSchema, type ApiTokenSummary } from '@/shared/schemas/results';
import { useApiTokens, useCreateApiToken, useRevokeApiToken } from '@/hooks/use-tokens';
import { useIsWide } from '@/hooks/use-layout';
import { colors, fonts, radii, space } from '@/themes/tokens';
import { formatDateTime } from '../results/format';
import { Banner } from '../ui/banner';
import { Button } from '../ui/button';
import { Card } from '../ui/card';
import { CopyButton } from '../ui/copy-button';
import { EmptyState } from '../ui/empty-state';
import { checkForm, errorMessage, serverFieldErrors, type FieldErrors } from '../ui/form';
import { Loading } from '../ui/loading';
import { Screen } from '../ui/screen';
import { Text } from '../ui/text';
import { TextField } from '../ui/text-field';

function TokenRow({ token }: { token: ApiTokenSummary }) {
  const revoke = useRevokeApiToken();
  const [confirm, setConfirm] = useState(false);
  return (
    <View style={styles.tokenRow}>
      <View style={styles.tokenText}>
        <Text variant="label">{token.name}</Text>
        <Text variant="caption">
          <Text style={styles.mono}>{token.prefix}…</Text> · created {formatDateTime(token.createdAt)} · {token.lastUsedAt ? `last used ${formatDateTime(token.lastUsedAt)}` : 'never used'}
        </Text>
      </View>
      {confirm ? (
        <View style={styles.confirm}>
          <Text variant="caption">Scripts using it will stop working.</Text>
          <View style={styles.row}>
            <Button compact variant="danger" label="Revoke" accessibilityLabel={`Confirm: revoke ${token.name}`} loading={revoke.isPending} onPress={() => revoke.mutate(token.id)} />
            <Button compact variant="ghost" label="Keep" accessibilityLabel={`Keep ${token.name}`} onPress={() => setConfirm(false)} />
          </View>
        </View>
      ) : (
        <Button compact variant="secondary" label="Revoke…" accessibilityLabel={`Revoke ${token.name}`} onPress={() => setConfirm(true)} />
      )}
      {revoke.error ? <Banner tone="error" message={errorMessage(revoke.error)!} /> : null}
    </View>
  );
}

/** Personal API tokens for scripts and pipelines: create (shown once), see their use, revoke. */
export function TokensScreen() {
  const tokens = useApiTokens();
  const create = useCreateApiToken();
  const wide = useIsWide();
  const [name, setName] = useState('');
  const [errors, setErrors] = useState<FieldErrors>({});
  const [fresh, setFresh] = useState<{ name: string; token: string } | null>(null);
  const submit = () => {
    const { data, errors: e } = checkForm(createTokenSchema, { name });
    setErrors(e);
    if (!data) return;
    create.mutate(data.name, {
      onSuccess: (t) => {
        setFresh({ name: t.name, token: t.token });
        setName('');
      },
      onError: (err) => setErrors(serverFieldErrors(err)),
    });
  };
  const form = (
    <Card>
      <Text variant="title">New token</Text>
      <TextField label="Token name" hint="Say where it is used, e.g. “dijet pipeline on the batch farm”." value={name} onChangeText={setName} error={errors.name} onSubmitEditing={submit} />
      {create.error && !Object.keys(errors).length ? <Banner tone="error" message={errorMessage(create.error)!} /> : null}
      <Button label="Create token" loading={create.isPending} onPress={submit} style={styles.alignStart} />
      {fresh ? (
        <View style={styles.fresh} role="region" aria-label="Your new token">
          <Text variant="label">Token “{fresh.name}”</Text>
          <Text selectable style={styles.secret} aria-label="New token text">
            {fresh.token}
          </Text>
          <Text style={styles.warning}>Copy it now: you will not see it again. Send it as “Authorization: Bearer …”.</Text>
          <View style={styles.row}>
            <CopyButton text={fresh.token} label="Copy token" />
            <Button compact variant="ghost" label="Done" accessibilityLabel="I have copied the token" onPress={() => setFresh(null)} />
          </View>
        </View>
      ) : null}
    </Card>
  );
  const list = (
    <View style={styles.list}>
      {tokens.isPending ? <Loading label="Loading tokens…" /> : null}
      {tokens.error ? <Banner tone="error" message={errorMessage(tokens.error)!} /> : null}
      {tokens.data?.length === 0 ? <EmptyState title="No tokens" message="Scripts can push results with a personal token instead of your password." /> : null}
      {tokens.data?.length ? (
        <Card>
          <Text variant="title">Your tokens</Text>
          {tokens.data.map((t) => (
            <TokenRow key={t.id} token={t} />
          ))}
        </Card>
      ) : null}
    </View>
  );
  return (
    <Screen title="API tokens" subtitle="Personal tokens act as you, with your roles in each group.">
      {wide ? (
        <View style={styles.columns}>
          <View style={styles.main}>{list}</View>
          <View style={styles.side}>{form}</View>
        </View>
      ) : (
        <>
          {form}
          {list}
        </>
      )}
    </Screen>
  );
}

const styles = StyleSheet.create({
  columns: { flexDirection: 'row', gap: space.lg, alignItems: 'flex-start' },
  main: { flex: 3, minWidth: 0 },
  side: { flex: 2, minWidth: 0 },
  list: { gap: space.md },
  row: { flexDirection: 'row', gap: space.sm, flexWrap: 'wrap', alignItems: 'center' },
  tokenRow: { flexDirection: 'row', flexWrap: 'wrap', alignItems: 'center', gap: space.sm, paddingTop: space.md, borderTopWidth: 1, borderTopColor: colors.border },
  tokenText: { gap: 2, flexGrow: 1, flexBasis: 220, minWidth: 0 },
  confirm: { gap: space.xs },
  mono: { fontFamily: fonts.mono, fontSize: 12 },
  fresh: { gap: space.sm, padding: space.md, borderRadius: radii.md, backgroundColor: colors.warningSoft, borderWidth: 1, borderColor: colors.warning },
  secret: { fontFamily: fonts.mono, fontSize: 14, backgroundColor: colors.surface, padding: space.sm, borderRadius: radii.sm },
  warning: { color: colors.warning, fontFamily: fonts.semibold },
  alignStart: { alignSelf: 'flex-start' },
});
