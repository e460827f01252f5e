import { useEffect, useMemo, useState } from 'react';
import { StyleSheet, View } from 'react-native';
import { COLUMN_ROLES, ROLE_TITLES, unusedNumericColumns, type ColumnMapping, type ColumnRole, type CsvTable } from '@/shared/curves/csv';
import { useIsWide } from '@/hooks/use-layout';
import { colors, fonts, radii, space } from '@/themes/tokens';
import { Banner } from '../ui/banner';
import { Select } from '../ui/select';
import { Text } from '../ui/text';
import { assignRole, roleChangeNotice, roleOfColumn, type Problem } from './upload-model';

const NONE = 'none';
type RoleChoice = ColumnRole | typeof NONE;
const OPTIONS = [{ value: NONE as RoleChoice, label: 'Not used' }, ...COLUMN_ROLES.map((r) => ({ value: r as RoleChoice, label: ROLE_TITLES[r] }))];

/**
 * One row per file column: its header, its first values and the role it plays. Detection from the
 * headers fills the roles in; the user confirms or changes them. A role is on one column only, so
 * giving it to another column moves it: that is said ("Observed limit moved from column “obs” to
 * column “obs (rerun)”."), never done silently. Columns with numbers but no role are marked.
 */
export function MappingEditor({ table, mapping, onChange, problems }: { table: CsvTable; mapping: ColumnMapping; onChange: (m: ColumnMapping) => void; problems: Problem[] }) {
  const wide = useIsWide();
  const [notice, setNotice] = useState<string | null>(null);
  useEffect(() => setNotice(null), [table]);
  const unused = useMemo(() => new Set(unusedNumericColumns(table, mapping)), [table, mapping]);
  const choose = (i: number, role: ColumnRole | null) => {
    setNotice(roleChangeNotice(table.headers, mapping, i, role));
    onChange(assignRole(mapping, i, role));
  };
  return (
    <View style={styles.wrap}>
      {notice ? <Banner tone="info" message={notice} /> : null}
      <View style={styles.list} role="list" aria-label="Columns of the file">
        {table.headers.map((header, i) => {
          const role = roleOfColumn(mapping, i);
          const first = table.rows.slice(0, 3).map((r) => r[i] ?? '');
          const lines = problems.filter((p) => p.column === header && p.row !== undefined).map((p) => p.row!);
          return (
            <View key={i} role="listitem" style={[styles.row, wide && styles.rowWide, lines.length > 0 && styles.rowProblem]}>
              <View style={[styles.info, wide && styles.infoWide]}>
                <Text style={styles.header} numberOfLines={2}>
                  {header || `Column ${i + 1}`}
                </Text>
                <Text variant="caption" numberOfLines={1}>
                  {first.join(' · ')}
                  {table.rows.length > 3 ? ' …' : ''}
                </Text>
                {unused.has(i) ? (
                  <Text variant="caption" style={styles.unused}>
                    Holds numbers but has no role: not stored
                  </Text>
                ) : null}
                {lines.length ? (
                  <Text variant="caption" style={styles.problem}>
                    {lines.length === 1 ? `Problem in line ${lines[0]}` : `Problems in lines ${[...new Set(lines)].slice(0, 6).join(', ')}${lines.length > 6 ? '…' : ''}`}
                  </Text>
                ) : null}
              </View>
              <View style={[styles.pick, wide && styles.pickWide]}>
                <Select
                  label="Role"
                  showLabel={false}
                  accessibilityLabel={`Role of column “${header || i + 1}”`}
                  value={role ?? NONE}
                  options={OPTIONS}
                  onChange={(v) => choose(i, v === NONE ? null : v)}
                />
              </View>
            </View>
          );
        })}
      </View>
    </View>
  );
}

const styles = StyleSheet.create({
  wrap: { gap: space.sm },
  list: { gap: space.sm },
  row: { gap: space.sm, padding: space.sm, borderRadius: radii.md, borderWidth: 1, borderColor: colors.border, backgroundColor: colors.surface },
  rowWide: { flexDirection: 'row', alignItems: 'flex-start' },
  rowProblem: { borderColor: colors.danger },
  info: { gap: 2, minWidth: 0 },
  infoWide: { flex: 1 },
  header: { fontFamily: fonts.semibold, fontSize: 14, lineHeight: 20 },
  problem: { color: colors.danger },
  unused: { color: colors.warning },
  pick: {},
  pickWide: { width: 220 },
});
