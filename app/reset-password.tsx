import { ResetPasswordScreen } from '@/components/screens/reset-password-screen';
export default ResetPasswordScreen;
