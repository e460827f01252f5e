import { TokensScreen } from '@/components/screens/tokens-screen';
export default TokensScreen;
