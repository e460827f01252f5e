import { MembersScreen } from '@/components/screens/members-screen';
export default MembersScreen;
