import { AccountScreen } from '@/components/screens/account-screen';
export default AccountScreen;
