import { CreateGroupScreen } from '@/components/screens/create-group-screen';
export default CreateGroupScreen;
