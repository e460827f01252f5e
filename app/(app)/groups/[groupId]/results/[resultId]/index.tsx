import { ResultScreen } from '@/components/screens/result-screen';
export default ResultScreen;
