import { ComputeScreen } from '@/components/screens/compute-screen';
export default ComputeScreen;
