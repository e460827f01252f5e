import { VerifyEmailScreen } from '@/components/screens/verify-email-screen';
export default VerifyEmailScreen;
