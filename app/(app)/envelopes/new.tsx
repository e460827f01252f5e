import { NewEnvelopeScreen } from '@/components/screens/envelope-screen';
export default NewEnvelopeScreen;
