import { SignInScreen } from '@/components/screens/sign-in-screen';
export default SignInScreen;
