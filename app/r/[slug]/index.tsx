import { CurrentPermalinkScreen } from '@/components/screens/permalink-screen';
export default CurrentPermalinkScreen;
