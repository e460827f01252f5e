import { Link, useLocalSearchParams } from 'expo-router';
import { useState } from 'react';
import { StyleSheet, View } from 'react-native';
import { requestPasswordResetSchema } from '@/shared/schemas/auth';
import { useRequestPasswordReset } from '@/hooks/use-session';
import { colors, fonts, space } from '@/themes/tokens';
import { Banner } from '../ui/banner';
import { Button } from '../ui/button';
import { checkForm, errorMessage, serverFieldErrors, type FieldErrors } from '../ui/form';
import { Text } from '../ui/text';
import { TextField } from '../ui/text-field';
import { AuthFrame } from './auth-form';

/** "Forgot password?": mails a reset link. The answer never says whether the address has an account. */
export function ForgotPasswordScreen() {
  const params = useLocalSearchParams<{ email?: string }>();
  const ask = useRequestPasswordReset();
  const [email, setEmail] = useState(params.email ?? '');
  const [errors, setErrors] = useState<FieldErrors>({});
  const [sentTo, setSentTo] = useState<string | null>(null);

  const submit = () => {
    const { data, errors: e } = checkForm(requestPasswordResetSchema, { email });
    setErrors(e);
    if (!data) return;
    ask.mutate(data, {
      onSuccess: () => setSentTo(data.email),
      onError: (err) => setErrors(serverFieldErrors(err)),
    });
  };

  return (
    <AuthFrame title="Forgot your password?">
      <Text variant="muted">Give the address of your account. We mail it a link to choose a new password; the link works once, within an hour.</Text>
      {sentTo ? <Banner tone="success" message={`If an account exists for ${sentTo}, a mail with a reset link was sent to it. Check your inbox.`} /> : null}
      {ask.error && !Object.keys(errors).length ? <Banner tone="error" message={errorMessage(ask.error)!} /> : null}
      <TextField
        label="E-mail"
        value={email}
        onChangeText={setEmail}
        autoComplete="email"
        inputMode="email"
        autoCapitalize="none"
        error={errors.email}
        onSubmitEditing={submit}
      />
      <Button label={sentTo ? 'Send the link again' : 'Send reset link'} onPress={submit} loading={ask.isPending} />
      <View style={styles.row}>
        <Text variant="muted">Remembered it?</Text>
        <Link href={{ pathname: '/sign-in', params: email ? { email } : {} }} style={styles.link}>
          Back to sign in
        </Link>
      </View>
    </AuthFrame>
  );
}

const styles = StyleSheet.create({
  row: { flexDirection: 'row', gap: space.sm, flexWrap: 'wrap' },
  link: { color: colors.primary, fontFamily: fonts.semibold, fontSize: 15, lineHeight: 22 },
});
