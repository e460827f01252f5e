import { useWindowDimensions } from 'react-native';
import { wideBreakpoint } from '@/themes/tokens';

/** Phone-first layout switch: wide (≥ 1024 px) gets side navigation and side-by-side panes. */
export function useIsWide(): boolean {
  return useWindowDimensions().width >= wideBreakpoint;
}
