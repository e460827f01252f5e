import { useState } from 'react';
import { StyleSheet, View } from 'react-native';
import { space } from '@/themes/tokens';
import { Banner } from '../ui/banner';
import { Button } from '../ui/button';
import { errorMessage, serverFieldErrors } from '../ui/form';
import { Text } from '../ui/text';
import { TextField } from '../ui/text-field';

const n = (v: number) => v.toLocaleString('en');

/** "x = 700", or "(x, y) = (1000, 100)" for a point of a two-parameter scan. */
export const pointName = (x: string, y?: string) => (y === undefined ? `x = ${x}` : `(x, y) = (${x}, ${y})`);

/** The count a rerun offers first: four times the point's current one (half the Monte-Carlo error), within the bound. */
export function defaultRerunToys(current: number, max: number): number {
  return Math.max(current + 1, Math.min(4 * current, max));
}

/** What is wrong with the typed count, or undefined when it may be sent (the server checks again). */
export function rerunToysProblem(text: string, current: number, max: number): string | undefined {
  const t = text.replace(/[,\s]/g, '');
  if (!/^\d+$/.test(t)) return 'Enter a whole number of pseudo-experiments';
  const v = Number(t);
  if (v <= current) return `Enter more than the point's current ${n(current)}`;
  if (v > max) return `At most ${n(max)} for this point (the scan cost limit and the plan's queue limit)`;
  return undefined;
}

/**
 * "Rerun this point with more pseudo-experiments": a count above the point's current one, within
 * the bound the server gives. Starting it makes a new scan (`onRerun` resolves once it is queued);
 * a refusal naming `toys` is shown by the field, any other above the button.
 */
export function RerunPoint({ x, y, current, max, pending, error, onRerun }: { x: string; y?: string; current: number; max: number; pending: boolean; error: unknown; onRerun: (toys: number) => void }) {
  // A point of a two-parameter scan is named by both coordinates everywhere.
  const at = pointName(x, y);
  const [text, setText] = useState(() => String(defaultRerunToys(current, max)));
  const [problem, setProblem] = useState<string | undefined>();
  const fromServer = serverFieldErrors(error).toys;
  const other = error && !fromServer ? errorMessage(error) : undefined;
  if (max <= current) {
    return <Text variant="caption">{`The point ${at} already has ${n(current)} pseudo-experiments per hypothesis, the most this scan and plan allow.`}</Text>;
  }
  const submit = () => {
    const p = rerunToysProblem(text, current, max);
    setProblem(p);
    if (!p) onRerun(Number(text.replace(/[,\s]/g, '')));
  };
  return (
    <View role="group" aria-label={`Rerun the point ${at} with more pseudo-experiments`} style={styles.box}>
      <Text variant="label">Rerun this point with more pseudo-experiments</Text>
      <Text variant="caption">
        {`A new scan of the same inputs: the other points are copied as computed, only ${at} is computed again. Its draft becomes a new version of the same result; the current version stays.`}
      </Text>
      <TextField
        label="Pseudo-experiments per hypothesis"
        value={text}
        onChangeText={(v) => {
          setText(v);
          setProblem(undefined);
        }}
        inputMode="numeric"
        hint={`Now ${n(current)}; at most ${n(max)}.`}
        error={problem ?? fromServer}
        onSubmitEditing={submit}
      />
      {other ? <Banner tone="error" message={other} /> : null}
      <Button label="Rerun this point" loading={pending} onPress={submit} />
    </View>
  );
}

const styles = StyleSheet.create({ box: { gap: space.sm } });
