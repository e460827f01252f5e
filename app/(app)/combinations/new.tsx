import { NewCombinationScreen } from '@/components/screens/combination-screen';
export default NewCombinationScreen;
