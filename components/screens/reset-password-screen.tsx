import { Link, useLocalSearchParams, useRouter } from 'expo-router';
import { useState } from 'react';
import { StyleSheet, View } from 'react-native';
import { ApiError } from '@/shared/api-client';
import { PASSWORD_MIN, resetPasswordFormSchema } from '@/shared/schemas/auth';
import { useResetPassword } from '@/hooks/use-session';
import { colors, fonts, space } from '@/themes/tokens';
import { Banner } from '../ui/banner';
import { Button } from '../ui/button';
import { checkForm, errorMessage, serverFieldErrors, type FieldErrors } from '../ui/form';
import { Text } from '../ui/text';
import { TextField } from '../ui/text-field';
import { AuthFrame } from './auth-form';

/**
 * Where the reset mail's link leads (`/reset-password?token=…`), signed in or not: the new
 * password twice, checked with the shared password rule; then every session ends and the person
 * signs in again.
 */
export function ResetPasswordScreen() {
  const { token } = useLocalSearchParams<{ token?: string }>();
  const router = useRouter();
  const reset = useResetPassword();
  const [newPassword, setNewPassword] = useState('');
  const [repeat, setRepeat] = useState('');
  const [errors, setErrors] = useState<FieldErrors>({});

  const submit = () => {
    const { data, errors: e } = checkForm(resetPasswordFormSchema, { newPassword, repeat });
    setErrors(e);
    if (!data || !token) return;
    reset.mutate(
      { token, newPassword: data.newPassword },
      {
        onSuccess: () => router.replace({ pathname: '/sign-in', params: { reset: 'done' } }),
        onError: (err) => setErrors(serverFieldErrors(err)),
      },
    );
  };
  const linkUnusable = reset.error instanceof ApiError && reset.error.code === 'invalid_token';

  return (
    <AuthFrame title="Choose a new password">
      {!token ? <Banner tone="error" message="This link has no reset token. Open the whole link from the mail, or ask for a new one." /> : null}
      <Text variant="muted">After the change, every device signed in to your account is signed out, and you sign in with the new password.</Text>
      {reset.error && !Object.keys(errors).length ? <Banner tone="error" message={errorMessage(reset.error)!} /> : null}
      <TextField
        label="New password"
        value={newPassword}
        onChangeText={setNewPassword}
        secureTextEntry
        autoComplete="new-password"
        hint={`At least ${PASSWORD_MIN} characters`}
        error={errors.newPassword}
      />
      <TextField
        label="Repeat the new password"
        value={repeat}
        onChangeText={setRepeat}
        secureTextEntry
        autoComplete="new-password"
        error={errors.repeat}
        onSubmitEditing={submit}
      />
      <Button label="Set new password" onPress={submit} loading={reset.isPending} disabled={!token} />
      {!token || linkUnusable ? (
        <View style={styles.row}>
          <Link href="/forgot-password" style={styles.link}>
            Ask for a new link
          </Link>
        </View>
      ) : null}
    </AuthFrame>
  );
}

const styles = StyleSheet.create({
  row: { flexDirection: 'row', gap: space.sm, flexWrap: 'wrap' },
  link: { color: colors.primary, fontFamily: fonts.semibold, fontSize: 15, lineHeight: 22 },
});
