import { StyleSheet } from 'react-native';
import { colors, fonts, space } from '@/themes/tokens';

/** The look of the app's small data tables (rows of Views that scroll sideways when too wide). */
export const tableStyles = StyleSheet.create({
  scroll: { flexGrow: 1 },
  table: { flexGrow: 1, borderWidth: 1, borderColor: colors.border, borderRadius: 6 },
  row: { flexDirection: 'row' },
  head: { backgroundColor: colors.surfaceAlt, borderBottomWidth: 1, borderBottomColor: colors.border },
  zebra: { backgroundColor: colors.bg },
  cell: { width: 92, flexGrow: 1, paddingHorizontal: space.sm, paddingVertical: 6, fontSize: 13, lineHeight: 18 },
  headText: { fontFamily: fonts.semibold, fontSize: 12, color: colors.textMuted },
  num: { fontVariant: ['tabular-nums'], textAlign: 'right' },
});
