import { NewResultScreen } from '@/components/screens/upload-screen';
export default NewResultScreen;
