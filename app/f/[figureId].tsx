import { PublicFigureScreen } from '@/components/screens/public-figure-screen';
export default PublicFigureScreen;
