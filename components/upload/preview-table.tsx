import { ScrollView, StyleSheet, View } from 'react-native';
import { COLUMN_ROLES, ROLE_TITLES, type ColumnMapping, type CsvTable } from '@/shared/curves/csv';
import { colors, fonts, space } from '@/themes/tokens';
import { tableStyles as t } from '../ui/table-styles';
import { Text } from '../ui/text';
import type { Problem } from './upload-model';

const ROWS = 8;

/** The first rows of the mapped columns as they are in the file, bad cells marked. */
export function PreviewTable({ table, mapping, problems }: { table: CsvTable; mapping: ColumnMapping; problems: Problem[] }) {
  const cols = COLUMN_ROLES.filter((r) => mapping[r] !== undefined).map((r) => ({ role: r, index: mapping[r]!, header: table.headers[mapping[r]!] ?? '' }));
  const bad = new Set(problems.filter((p) => p.row !== undefined).map((p) => `${p.row}|${p.column}`));
  // Lines with problems are worth seeing even when they are further down the file.
  const problemLines = new Set(problems.map((p) => p.row).filter((r): r is number => r !== undefined));
  const rowIdx = table.rows.map((_, i) => i).filter((i) => i < ROWS || problemLines.has(table.lines[i]!)).slice(0, ROWS + 6);
  return (
    <View style={styles.wrap}>
      <ScrollView horizontal contentContainerStyle={t.scroll}>
        <View role="table" aria-label="First rows of the file" style={t.table}>
          <View role="row" style={[t.row, t.head]}>
            <Text role="columnheader" style={[t.cell, styles.lineCell, t.headText]}>
              Line
            </Text>
            {cols.map((c) => (
              <View key={c.role} role="columnheader" style={t.cell}>
                <Text style={t.headText} numberOfLines={1}>
                  {ROLE_TITLES[c.role]}
                </Text>
                <Text variant="caption" numberOfLines={1}>
                  {c.header}
                </Text>
              </View>
            ))}
          </View>
          {rowIdx.map((i) => {
            const line = table.lines[i]!;
            return (
              <View key={i} role="row" style={[t.row, problemLines.has(line) && styles.badRow]}>
                <Text role="cell" style={[t.cell, styles.lineCell, styles.lineText]}>
                  {line}
                </Text>
                {cols.map((c) => {
                  const isBad = bad.has(`${line}|${c.header}`);
                  return (
                    <Text key={c.role} role="cell" style={[t.cell, t.num, styles.left, isBad && styles.badCell]} aria-invalid={isBad || undefined}>
                      {table.rows[i]![c.index] ?? ''}
                    </Text>
                  );
                })}
              </View>
            );
          })}
        </View>
      </ScrollView>
      <Text variant="caption">
        {table.rows.length} data rows · {table.delimiter === '\t' ? 'tab' : table.delimiter === ';' ? 'semicolon' : 'comma'}-separated
        {rowIdx.length < table.rows.length ? ` · first ${Math.min(ROWS, table.rows.length)} rows and the rows with problems shown` : ''}
      </Text>
    </View>
  );
}

const styles = StyleSheet.create({
  wrap: { gap: space.xs },
  badRow: { backgroundColor: colors.dangerSoft },
  lineCell: { width: 48, flexGrow: 0 },
  lineText: { color: colors.textMuted, fontSize: 12 },
  left: { textAlign: 'left' },
  badCell: { color: colors.danger, fontFamily: fonts.bold },
});
