import { Link, useLocalSearchParams, useRouter } from 'expo-router';
import { useState } from 'react';
import { StyleSheet, View } from 'react-native';
import { signInSchema } from '@/shared/schemas/auth';
import { useSignIn } from '@/hooks/use-session';
import { colors, fonts, space } from '@/themes/tokens';
import { Banner } from '../ui/banner';
import { Button } from '../ui/button';
import { checkForm, errorMessage, serverFieldErrors, type FieldErrors } from '../ui/form';
import { Text } from '../ui/text';
import { TextField } from '../ui/text-field';
import { AuthFrame } from './auth-form';

/** Only same-app paths are followed after sign-in (no open redirects). */
export function safeNext(next: unknown): string {
  return typeof next === 'string' && next.startsWith('/') && !next.startsWith('//') ? next : '/';
}

export function SignInScreen() {
  // `reset=done`: back from setting a new password (every session was ended).
  const params = useLocalSearchParams<{ next?: string; email?: string; reset?: string }>();
  const router = useRouter();
  const signIn = useSignIn();
  const [email, setEmail] = useState(params.email ?? '');
  const [password, setPassword] = useState('');
  const [errors, setErrors] = useState<FieldErrors>({});

  const submit = () => {
    const { data, errors: e } = checkForm(signInSchema, { email, password });
    setErrors(e);
    if (!data) return;
    signIn.mutate(data, {
      onSuccess: () => router.replace(safeNext(params.next) as never),
      onError: (err) => setErrors(serverFieldErrors(err)),
    });
  };

  return (
    <AuthFrame title="Sign in">
      {params.reset === 'done' && !signIn.error ? <Banner tone="success" message="Your password was changed and every device was signed out. Sign in with the new password." /> : null}
      {signIn.error && !Object.keys(errors).length ? <Banner tone="error" message={errorMessage(signIn.error)!} /> : null}
      <TextField label="E-mail" value={email} onChangeText={setEmail} autoComplete="email" inputMode="email" autoCapitalize="none" error={errors.email} onSubmitEditing={submit} />
      <TextField label="Password" value={password} onChangeText={setPassword} secureTextEntry autoComplete="current-password" error={errors.password} onSubmitEditing={submit} />
      <Link href={{ pathname: '/forgot-password', params: email ? { email } : {} }} style={[styles.link, styles.forgot]}>
        Forgot password?
      </Link>
      <Button label="Sign in" onPress={submit} loading={signIn.isPending} />
      <View style={styles.row}>
        <Text variant="muted">New here?</Text>
        <Link href={{ pathname: '/sign-up', params: params.next ? { next: params.next, email } : { email } }} style={styles.link}>
          Create an account
        </Link>
      </View>
      <View style={styles.links}>
        <Link href="/public" style={styles.link}>
          Browse public results
        </Link>
        <Link href="/public/figures" style={styles.link}>
          Browse public figures
        </Link>
      </View>
    </AuthFrame>
  );
}

const styles = StyleSheet.create({
  row: { flexDirection: 'row', gap: space.sm, flexWrap: 'wrap' },
  links: { flexDirection: 'row', columnGap: space.lg, rowGap: space.sm, flexWrap: 'wrap' },
  link: { color: colors.primary, fontFamily: fonts.semibold, fontSize: 15, lineHeight: 22 },
  forgot: { alignSelf: 'flex-start' },
});
