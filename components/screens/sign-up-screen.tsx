import { Link, useLocalSearchParams, useRouter } from 'expo-router';
import { useState } from 'react';
import { StyleSheet, View } from 'react-native';
import { PASSWORD_MIN, signUpSchema } from '@/shared/schemas/auth';
import { useSignUp } from '@/hooks/use-session';
import { colors, fonts, space } from '@/themes/tokens';
import { Banner } from '../ui/banner';
import { Button } from '../ui/button';
import { checkForm, errorMessage, serverFieldErrors, type FieldErrors } from '../ui/form';
import { Text } from '../ui/text';
import { TextField } from '../ui/text-field';
import { AuthFrame } from './auth-form';
import { safeNext } from './sign-in-screen';

export function SignUpScreen() {
  const params = useLocalSearchParams<{ next?: string; email?: string }>();
  const router = useRouter();
  const signUp = useSignUp();
  const [name, setName] = useState('');
  const [email, setEmail] = useState(params.email ?? '');
  const [password, setPassword] = useState('');
  const [errors, setErrors] = useState<FieldErrors>({});

  const submit = () => {
    // The verification link in the sign-up mail leads back to where the visitor was heading.
    const { data, errors: e } = checkForm(signUpSchema, { name, email, password, callbackURL: safeNext(params.next) });
    setErrors(e);
    if (!data) return;
    signUp.mutate(data, {
      onSuccess: () => router.replace(safeNext(params.next) as never),
      onError: (err) => setErrors(serverFieldErrors(err)),
    });
  };

  return (
    <AuthFrame title="Create an account">
      {signUp.error && !Object.keys(errors).length ? <Banner tone="error" message={errorMessage(signUp.error)!} /> : null}
      <TextField label="Your name" value={name} onChangeText={setName} autoComplete="name" error={errors.name} />
      <TextField label="E-mail" value={email} onChangeText={setEmail} autoComplete="email" inputMode="email" autoCapitalize="none" error={errors.email} />
      <TextField
        label="Password"
        value={password}
        onChangeText={setPassword}
        secureTextEntry
        autoComplete="new-password"
        hint={`At least ${PASSWORD_MIN} characters`}
        error={errors.password}
        onSubmitEditing={submit}
      />
      <Button label="Create account" onPress={submit} loading={signUp.isPending} />
      <View style={styles.row}>
        <Text variant="muted">Already have an account?</Text>
        <Link href={{ pathname: '/sign-in', params: params.next ? { next: params.next } : {} }} style={styles.link}>
          Sign in
        </Link>
      </View>
    </AuthFrame>
  );
}

const styles = StyleSheet.create({
  row: { flexDirection: 'row', gap: space.sm, flexWrap: 'wrap' },
  link: { color: colors.primary, fontFamily: fonts.semibold, fontSize: 15, lineHeight: 22 },
});
