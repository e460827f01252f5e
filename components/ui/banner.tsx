import { StyleSheet, View } from 'react-native';
import { colors, radii, space } from '@/themes/tokens';
import { Text } from './text';

type Tone = 'error' | 'info' | 'success' | 'warning';
const tones = {
  error: { bg: colors.dangerSoft, fg: colors.danger },
  info: { bg: colors.primarySoft, fg: colors.primary },
  success: { bg: colors.successSoft, fg: colors.success },
  warning: { bg: colors.warningSoft, fg: colors.warning },
};

/** A message box; errors are announced as alerts, others as polite status updates. */
export function Banner({ tone = 'info', message }: { tone?: Tone; message: string }) {
  const c = tones[tone];
  return (
    <View role={tone === 'error' ? 'alert' : 'status'} style={[styles.box, { backgroundColor: c.bg, borderColor: c.fg }]}>
      <Text style={{ color: c.fg }}>{message}</Text>
    </View>
  );
}

const styles = StyleSheet.create({
  box: { borderWidth: 1, borderRadius: radii.md, padding: space.md },
});
