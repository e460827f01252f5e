import { ForgotPasswordScreen } from '@/components/screens/forgot-password-screen';
export default ForgotPasswordScreen;
