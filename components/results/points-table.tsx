import { useState } from 'react';
import { ScrollView, StyleSheet, View } from 'react-native';
import type { Curve, Theory } from '@/shared/schemas/results';
import { space } from '@/themes/tokens';
import { tableStyles as t } from '../ui/table-styles';
import { Button } from '../ui/button';
import { Text } from '../ui/text';
import { formatValue } from './format';

const FIRST_ROWS = 25;

type Column = { title: string; values: number[] };

/** The curve's columns (and the theory's when it shares the grid) in a fixed order. */
export function curveColumns(curve: Curve, theory: Theory | null, xTitle: string): { columns: Column[]; theorySeparate: boolean } {
  const columns: Column[] = [{ title: xTitle, values: curve.x }];
  if (curve.observed) columns.push({ title: 'Observed', values: curve.observed });
  const e = curve.expected ?? {};
  for (const [k, title] of [['-2', 'Exp. −2σ'], ['-1', 'Exp. −1σ'], ['0', 'Expected'], ['1', 'Exp. +1σ'], ['2', 'Exp. +2σ']] as const) {
    const v = e[k];
    if (v) columns.push({ title, values: v });
  }
  const sameGrid = !!theory && theory.x.length === curve.x.length && theory.x.every((v, i) => v === curve.x[i]);
  if (theory && sameGrid) {
    columns.push({ title: 'Theory', values: theory.central });
    if (theory.lower) columns.push({ title: 'Theory low', values: theory.lower });
    if (theory.upper) columns.push({ title: 'Theory high', values: theory.upper });
  }
  return { columns, theorySeparate: !!theory && !sameGrid };
}

/** A table of numbers that scrolls sideways when its columns do not fit. */
export function NumberTable({ columns, label, rows: rowLimit = FIRST_ROWS }: { columns: Column[]; label: string; rows?: number }) {
  const [all, setAll] = useState(false);
  const n = columns[0]?.values.length ?? 0;
  const shown = all ? n : Math.min(n, rowLimit);
  return (
    <View style={styles.wrap}>
      <ScrollView horizontal contentContainerStyle={t.scroll}>
        <View role="table" aria-label={label} style={t.table}>
          <View role="row" style={[t.row, t.head]}>
            {columns.map((c, i) => (
              <Text key={i} role="columnheader" style={[t.cell, t.headText, styles.right]} numberOfLines={2}>
                {c.title}
              </Text>
            ))}
          </View>
          {Array.from({ length: shown }, (_, r) => (
            <View key={r} role="row" style={[t.row, r % 2 === 1 && t.zebra]}>
              {columns.map((c, i) => (
                <Text key={i} role="cell" style={[t.cell, t.num]}>
                  {formatValue(c.values[r] ?? NaN)}
                </Text>
              ))}
            </View>
          ))}
        </View>
      </ScrollView>
      {n > rowLimit ? (
        <Button compact variant="ghost" label={all ? `Show the first ${rowLimit} rows` : `Show all ${n} rows`} onPress={() => setAll((a) => !a)} style={styles.more} />
      ) : null}
    </View>
  );
}

/** The points of a version: the limit columns, and the theory on its own when its grid differs. */
export function PointsTable({ curve, theory, xTitle }: { curve: Curve; theory: Theory | null; xTitle: string }) {
  const { columns, theorySeparate } = curveColumns(curve, theory, xTitle);
  return (
    <View style={styles.wrap}>
      <NumberTable columns={columns} label="Limit points" />
      {theorySeparate && theory ? (
        <>
          <Text variant="label">Theory{theory.label ? ` (${theory.label})` : ''}</Text>
          <NumberTable
            label="Theory points"
            columns={[
              { title: xTitle, values: theory.x },
              { title: 'Theory', values: theory.central },
              ...(theory.lower ? [{ title: 'Theory low', values: theory.lower }] : []),
              ...(theory.upper ? [{ title: 'Theory high', values: theory.upper }] : []),
            ]}
          />
        </>
      ) : null}
    </View>
  );
}

const styles = StyleSheet.create({
  wrap: { gap: space.sm },
  right: { textAlign: 'right' },
  more: { alignSelf: 'flex-start' },
});
