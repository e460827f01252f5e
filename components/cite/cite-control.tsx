import { useEffect, useMemo, useRef, useState, type Ref } from 'react';
import { Platform, StyleSheet, TextInput, View } from 'react-native';
import { cslJsonText, toBibtex, type CiteSource } from '@/shared/cite';
import { colors, fonts, radii, space } from '@/themes/tokens';
import { Button } from '../ui/button';
import { CopyButton } from '../ui/copy-button';
import { Text } from '../ui/text';

/** Today as an ISO date (the CSL `accessed` day). */
const today = () => new Date().toISOString().slice(0, 10);

/**
 * "Cite": a button that unfolds a panel with the BibTeX entry and the CSL-JSON item of one version
 * (both carry its permanent link and number, written by shared/cite.ts). Each comes in a read-only
 * box whose text can be selected (all of it on focus) and a copy button. Focus moves into the panel
 * when it opens and back to the button when it closes; Escape closes it on the web.
 */
export function CiteControl({ source, what }: { source: Omit<CiteSource, 'accessed'>; what: string }) {
  const [open, setOpen] = useState(false);
  const toggle = useRef<View>(null);
  const firstBox = useRef<TextInput>(null);
  const wasOpen = useRef(false);
  const texts = useMemo(() => {
    const src = { ...source, accessed: today() };
    return { bibtex: toBibtex(src), csl: cslJsonText(src) };
  }, [source]);

  useEffect(() => {
    if (open) firstBox.current?.focus();
    else if (wasOpen.current) toggle.current?.focus();
    wasOpen.current = open;
  }, [open]);

  // react-native-web passes key events of the panel's elements up; React Native's types do not know onKeyDown on View.
  const escape =
    Platform.OS === 'web'
      ? ({
          onKeyDown: (e: { key?: string; nativeEvent?: { key?: string } }) => {
            if ((e.key ?? e.nativeEvent?.key) === 'Escape') setOpen(false);
          },
        } as object)
      : {};

  return (
    <View style={styles.wrap}>
      <Button
        ref={toggle}
        compact
        variant="secondary"
        label="Cite"
        accessibilityLabel={`Cite ${what}`}
        aria-expanded={open}
        onPress={() => setOpen((o) => !o)}
        style={styles.toggle}
      />
      {open ? (
        <View role="region" aria-label={`Citation of ${what}`} style={styles.panel} {...escape}>
          <Text variant="title">Cite {what}</Text>
          <Text variant="caption">Both forms name version {source.version} and its permanent link, so a reader finds exactly what you used.</Text>
          <CiteBox ref={firstBox} title="BibTeX" text={texts.bibtex} copyLabel="Copy BibTeX" />
          <CiteBox title="CSL-JSON" text={texts.csl} copyLabel="Copy CSL-JSON" />
          <Button compact variant="ghost" label="Close" accessibilityLabel="Close the citation" onPress={() => setOpen(false)} style={styles.toggle} />
        </View>
      ) : null}
    </View>
  );
}

function CiteBox({ title, text, copyLabel, ref }: { title: string; text: string; copyLabel: string; ref?: Ref<TextInput> }) {
  // Long lines wrap on a phone: a few rows more than the text's own lines, then the box scrolls.
  const rows = Math.min(text.split('\n').length + 3, 16);
  return (
    <View style={styles.box}>
      <View style={styles.boxHead}>
        <Text variant="label">{title}</Text>
        <CopyButton text={text} label={copyLabel} />
      </View>
      <TextInput
        ref={ref}
        value={text}
        editable={false}
        multiline
        selectTextOnFocus
        numberOfLines={rows}
        aria-label={`${title} text`}
        style={[styles.code, { height: rows * 18 + 2 * space.sm + 2 }]}
      />
    </View>
  );
}

const styles = StyleSheet.create({
  wrap: { gap: space.md },
  toggle: { alignSelf: 'flex-start' },
  panel: { gap: space.md, padding: space.lg, borderWidth: 1, borderColor: colors.border, borderRadius: radii.lg, backgroundColor: colors.surface },
  box: { gap: space.sm },
  boxHead: { flexDirection: 'row', alignItems: 'center', justifyContent: 'space-between', gap: space.md, flexWrap: 'wrap' },
  code: {
    fontFamily: fonts.mono,
    fontSize: 13,
    lineHeight: 18,
    color: colors.text,
    backgroundColor: colors.surfaceAlt,
    borderWidth: 1,
    borderColor: colors.border,
    borderRadius: radii.md,
    padding: space.sm,
    textAlignVertical: 'top',
  },
});
