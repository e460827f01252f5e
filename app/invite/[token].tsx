import { InvitationScreen } from '@/components/screens/invitation-screen';
export default InvitationScreen;
