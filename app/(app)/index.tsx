import { ResultsHomeScreen } from '@/components/screens/results-home-screen';
export default ResultsHomeScreen;
