import { Link } from 'expo-router';
import { AuthFrame } from '@/components/screens/auth-form';
import { Text } from '@/components/ui/text';
import { colors } from '@/themes/tokens';

export default function NotFound() {
  return (
    <AuthFrame title="Page not found">
      <Text variant="muted">There is nothing at this address.</Text>
      <Link href="/" style={{ color: colors.primary, fontWeight: '600' }}>
        Go to your results
      </Link>
    </AuthFrame>
  );
}
