import fs from 'node:fs';
import path from 'node:path';
import opentype from 'opentype.js';
import type { FontRole } from '../../shared/figure/types';

/**
 * The shipped fonts (the same TTFs the app loads): their outlines become label paths, and the PDF
 * renderer embeds them for its searchable text layer. Loaded once per process.
 */

const FONT_FILES: Record<FontRole, { pkg: string; file: string; family: string }> = {
  sans: { pkg: '@expo-google-fonts/inter', file: '400Regular/Inter_400Regular.ttf', family: 'Inter' },
  serif: { pkg: '@expo-google-fonts/source-serif-4', file: '400Regular/SourceSerif4_400Regular.ttf', family: 'SourceSerif4' },
};

export function fontFile(role: FontRole): { path: string; family: string; fileName: string } {
  const f = FONT_FILES[role];
  const dir = path.dirname(require.resolve(`${f.pkg}/package.json`));
  return { path: path.join(dir, f.file), family: f.family, fileName: path.basename(f.file) };
}

export type LoadedFont = {
  font: opentype.Font;
  /** Font units per em. */
  upm: number;
  capHeight: number;
  xHeight: number;
  /** Depth of a descender ("p"), positive, in font units. */
  descender: number;
};

const loaded = new Map<FontRole, LoadedFont>();
const bytes = new Map<FontRole, Buffer>();

export function fontBytes(role: FontRole): Buffer {
  let b = bytes.get(role);
  if (!b) {
    b = fs.readFileSync(fontFile(role).path);
    bytes.set(role, b);
  }
  return b;
}

export function loadFont(role: FontRole): LoadedFont {
  let f = loaded.get(role);
  if (f) return f;
  const b = fontBytes(role);
  const font = opentype.parse(b.buffer.slice(b.byteOffset, b.byteOffset + b.byteLength) as ArrayBuffer);
  const os2 = (font.tables as { os2?: { sCapHeight?: number; sxHeight?: number } }).os2;
  const upm = font.unitsPerEm;
  const p = font.charToGlyph('p').getBoundingBox();
  f = {
    font,
    upm,
    capHeight: os2?.sCapHeight || 0.7 * upm,
    xHeight: os2?.sxHeight || 0.5 * upm,
    descender: Math.max(0, -p.y1) || 0.2 * upm,
  };
  loaded.set(role, f);
  return f;
}
