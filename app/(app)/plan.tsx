import { PlanScreen } from '@/components/screens/plan-screen';
export default PlanScreen;
