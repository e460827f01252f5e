import { useEffect, useState } from 'react';
import { Platform, StyleSheet } from 'react-native';
import { Button } from './button';

async function copyText(text: string): Promise<boolean> {
  if (Platform.OS !== 'web' || typeof navigator === 'undefined' || !navigator.clipboard) return false;
  try {
    await navigator.clipboard.writeText(text);
    return true;
  } catch {
    return false;
  }
}

/** Copies a text; says whether it worked (browsers may refuse, then the text is there to select). */
export function CopyButton({ text, label = 'Copy', accessibilityLabel }: { text: string; label?: string; accessibilityLabel?: string }) {
  const [state, setState] = useState<'idle' | 'copied' | 'failed'>('idle');
  useEffect(() => {
    if (state === 'idle') return;
    const t = setTimeout(() => setState('idle'), 2500);
    return () => clearTimeout(t);
  }, [state]);
  return (
    <Button
      compact
      variant="secondary"
      label={state === 'copied' ? 'Copied' : state === 'failed' ? 'Select and copy it' : label}
      accessibilityLabel={state === 'idle' ? accessibilityLabel ?? label : undefined}
      onPress={() => void copyText(text).then((ok) => setState(ok ? 'copied' : 'failed'))}
      style={styles.button}
    />
  );
}

const styles = StyleSheet.create({ button: { alignSelf: 'flex-start' } });
