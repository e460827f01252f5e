import { PublicResultsScreen } from '@/components/screens/public-results-screen';
export default PublicResultsScreen;
