import { InboxScreen } from '@/components/screens/inbox-screen';
export default InboxScreen;
