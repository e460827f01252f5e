import { ResultsListScreen } from '@/components/screens/results-list-screen';
export default ResultsListScreen;
