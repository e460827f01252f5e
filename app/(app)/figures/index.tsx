import { FiguresScreen } from '@/components/screens/figures-screen';
export default FiguresScreen;
