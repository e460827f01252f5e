import { StyleSheet, View } from 'react-native';
import { formatCount } from '@/shared/curves/check';
import { colors, fonts, radii, space } from '@/themes/tokens';
import { Text } from '../ui/text';
import type { Problem } from './upload-model';

/** "Line 5, column “exp+1s”: …" — where a problem is, in the file's own words. */
export function problemText(p: Problem, rowWord = 'Line'): string {
  const where = [p.row !== undefined ? `${rowWord} ${p.row}` : null, p.column === 'file' ? 'the file' : `column “${p.column}”`].filter(Boolean).join(', ');
  return `${where.charAt(0).toUpperCase()}${where.slice(1)}: ${p.reason}`;
}

/**
 * The problems of a file, each with its line (or point), column and reason: the first `max` of
 * them, then how many more there are. `total` counts problems found beyond the list (the checks
 * keep the first MAX_PROBLEMS of a file and count the rest).
 */
export function ProblemList({ problems, title, rowWord = 'Line', max = 50, total }: { problems: Problem[]; title?: string; rowWord?: string; max?: number; total?: number }) {
  if (problems.length === 0) return null;
  const all = Math.max(total ?? problems.length, problems.length);
  const heading = title ?? (all === 1 ? '1 problem to fix' : `${formatCount(all)} problems to fix`);
  const shown = Math.min(max, problems.length);
  return (
    <View style={styles.box} role="alert" aria-label={heading}>
      <Text style={styles.title}>{heading}</Text>
      <View role="list" style={styles.list}>
        {problems.slice(0, max).map((p, i) => (
          <Text key={i} role="listitem" style={styles.item}>
            • {problemText(p, rowWord)}
          </Text>
        ))}
      </View>
      {all > shown ? <Text variant="caption">…and {formatCount(all - shown)} more.</Text> : null}
    </View>
  );
}

const styles = StyleSheet.create({
  box: { gap: space.sm, padding: space.md, borderRadius: radii.md, borderWidth: 1, borderColor: colors.danger, backgroundColor: colors.dangerSoft },
  title: { fontFamily: fonts.semibold, color: colors.danger },
  list: { gap: space.xs },
  item: { color: colors.text, fontSize: 14, lineHeight: 20 },
});
