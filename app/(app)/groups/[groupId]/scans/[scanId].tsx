import { ScanScreen } from '@/components/screens/scan-screen';
export default ScanScreen;
