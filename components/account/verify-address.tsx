import { Link } from 'expo-router';
import { StyleSheet, View } from 'react-native';
import { useResendVerification } from '@/hooks/use-session';
import { colors, fonts, space } from '@/themes/tokens';
import { Banner } from '../ui/banner';
import { Button } from '../ui/button';
import { errorMessage } from '../ui/form';
import { Text } from '../ui/text';

/**
 * "Verify your address first", with a button that mails a new link. `callbackURL` is where the
 * new link leads back to (an app path); `devTools` adds a way to the development inbox.
 */
export function VerifyAddress({ email, callbackURL, why, devTools }: { email: string; callbackURL: string; why: string; devTools?: boolean }) {
  const resend = useResendVerification();
  return (
    <View style={styles.box}>
      <Banner tone="warning" message={`Verify your address first. ${why} Open the link in the verification mail sent to ${email}.`} />
      {resend.isSuccess ? <Banner tone="success" message={`A new verification mail was sent to ${email}.`} /> : null}
      {resend.error ? <Banner tone="error" message={errorMessage(resend.error)!} /> : null}
      <Button
        variant="secondary"
        label="Send the verification mail again"
        loading={resend.isPending}
        onPress={() => resend.mutate({ email, callbackURL })}
      />
      {devTools ? (
        <Text variant="caption">
          In development the mail is kept on this machine:{' '}
          <Link href="/inbox" style={styles.link}>
            open the development inbox
          </Link>
          .
        </Text>
      ) : null}
    </View>
  );
}

const styles = StyleSheet.create({
  box: { gap: space.sm },
  link: { color: colors.primary, fontFamily: fonts.semibold },
});
