import { PermalinkScreen } from '@/components/screens/permalink-screen';
export default PermalinkScreen;
