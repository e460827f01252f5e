import { SignUpScreen } from '@/components/screens/sign-up-screen';
export default SignUpScreen;
