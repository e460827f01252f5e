import { NewFigureScreen } from '@/components/screens/figure-composer-screen';
export default NewFigureScreen;
