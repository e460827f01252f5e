import { NewVersionScreen } from '@/components/screens/upload-screen';
export default NewVersionScreen;
