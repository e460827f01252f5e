import { PublicFiguresScreen } from '@/components/screens/public-figures-screen';
export default PublicFiguresScreen;
