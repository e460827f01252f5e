import { FigureComposerScreen } from '@/components/screens/figure-composer-screen';
export default FigureComposerScreen;
