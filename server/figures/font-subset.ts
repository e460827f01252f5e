/**
 * A TrueType subset for the PDF's text layer: the shipped TTF with only the glyphs the text uses
 * (plus .notdef and the parts of composite glyphs), every other glyph empty. Glyph ids are kept
 * (the PDF addresses glyphs by id through `/CIDToGIDMap /Identity`), the layout tables (GSUB,
 * GPOS, GDEF, STAT) are left out, glyph names dropped (`post` format 3) and the `cmap` lists only
 * the characters used. Table layout follows the OpenType specification (tables sorted by tag,
 * 4-byte aligned, checksums, `head.checkSumAdjustment`). Deterministic: same font and glyphs,
 * same bytes.
 */

type Table = { tag: string; offset: number; length: number };

function tableDirectory(font: Buffer): Map<string, Table> {
  const count = font.readUInt16BE(4);
  const out = new Map<string, Table>();
  for (let i = 0; i < count; i++) {
    const at = 12 + 16 * i;
    const tag = font.toString('latin1', at, at + 4);
    out.set(tag, { tag, offset: font.readUInt32BE(at + 8), length: font.readUInt32BE(at + 12) });
  }
  return out;
}

/** Tables copied as they are (hinting programs included: `prep` may refer to `cvt `). */
const COPIED = ['OS/2', 'cvt ', 'fpgm', 'gasp', 'hhea', 'maxp', 'name', 'prep'] as const;

function checksum(b: Buffer): number {
  let sum = 0;
  const padded = b.length % 4 ? Buffer.concat([b, Buffer.alloc(4 - (b.length % 4))]) : b;
  for (let i = 0; i < padded.length; i += 4) sum = (sum + padded.readUInt32BE(i)) >>> 0;
  return sum;
}

/** Component glyph ids of a composite glyph (empty for a simple one). */
function components(glyph: Buffer): number[] {
  if (glyph.length < 10 || glyph.readInt16BE(0) >= 0) return [];
  const ids: number[] = [];
  let at = 10;
  for (;;) {
    const flags = glyph.readUInt16BE(at);
    ids.push(glyph.readUInt16BE(at + 2));
    at += 4 + (flags & 0x0001 ? 4 : 2);
    if (flags & 0x0008) at += 2;
    else if (flags & 0x0040) at += 4;
    else if (flags & 0x0080) at += 8;
    if (!(flags & 0x0020)) return ids;
  }
}

/** A `cmap` with one format 4 subtable (Windows, Unicode BMP) mapping each used character to its glyph. */
function cmapTable(chars: Map<number, number>): Buffer {
  const codes = [...chars.keys()].filter((c) => c > 0 && c < 0xffff).sort((a, b) => a - b);
  const segments = [...codes.map((c) => ({ start: c, end: c, delta: (chars.get(c)! - c) & 0xffff })), { start: 0xffff, end: 0xffff, delta: 1 }];
  const segX2 = segments.length * 2;
  const log = Math.floor(Math.log2(segments.length));
  const searchRange = 2 * 2 ** log;
  const sub = Buffer.alloc(16 + segments.length * 8);
  sub.writeUInt16BE(4, 0);
  sub.writeUInt16BE(sub.length, 2);
  sub.writeUInt16BE(0, 4);
  sub.writeUInt16BE(segX2, 6);
  sub.writeUInt16BE(searchRange, 8);
  sub.writeUInt16BE(log, 10);
  sub.writeUInt16BE(segX2 - searchRange, 12);
  segments.forEach((s, i) => {
    sub.writeUInt16BE(s.end, 14 + 2 * i);
    sub.writeUInt16BE(s.start, 16 + segX2 + 2 * i);
    sub.writeUInt16BE(s.delta, 16 + 2 * segX2 + 2 * i);
    sub.writeUInt16BE(0, 16 + 3 * segX2 + 2 * i);
  });
  const header = Buffer.alloc(12);
  header.writeUInt16BE(0, 0);
  header.writeUInt16BE(1, 2);
  header.writeUInt16BE(3, 4);
  header.writeUInt16BE(1, 6);
  header.writeUInt32BE(12, 8);
  return Buffer.concat([header, sub]);
}

/**
 * The font `ttf` reduced to `glyphIds` (and what they are built from); `chars` maps character
 * codes to glyph ids for the new `cmap`.
 */
export function subsetTtf(ttf: Buffer, glyphIds: Iterable<number>, chars: Map<number, number>): Buffer {
  const dir = tableDirectory(ttf);
  const table = (tag: string) => {
    const t = dir.get(tag);
    if (!t) throw new Error(`font has no ${tag} table`);
    return ttf.subarray(t.offset, t.offset + t.length);
  };
  const head = Buffer.from(table('head'));
  const numGlyphs = table('maxp').readUInt16BE(4);
  const longLoca = head.readInt16BE(50) === 1;
  const loca = table('loca');
  const glyf = table('glyf');
  const glyphAt = (id: number) => {
    const [a, b] = longLoca ? [loca.readUInt32BE(4 * id), loca.readUInt32BE(4 * id + 4)] : [2 * loca.readUInt16BE(2 * id), 2 * loca.readUInt16BE(2 * id + 2)];
    return glyf.subarray(a, b);
  };

  // The glyphs kept: .notdef, the used ones and, recursively, their components.
  const keep = new Set<number>([0]);
  const todo = [...glyphIds].filter((id) => id >= 0 && id < numGlyphs);
  while (todo.length) {
    const id = todo.pop()!;
    if (keep.has(id) && id !== 0) continue;
    keep.add(id);
    for (const c of components(glyphAt(id))) if (!keep.has(c) && c < numGlyphs) todo.push(c);
  }

  const parts: Buffer[] = [];
  const newLoca = Buffer.alloc(4 * (numGlyphs + 1));
  let offset = 0;
  for (let id = 0; id < numGlyphs; id++) {
    newLoca.writeUInt32BE(offset, 4 * id);
    if (!keep.has(id)) continue;
    const g = glyphAt(id);
    const pad = (4 - (g.length % 4)) % 4;
    parts.push(g, Buffer.alloc(pad));
    offset += g.length + pad;
  }
  newLoca.writeUInt32BE(offset, 4 * numGlyphs);

  // Metrics of unused glyphs zeroed (the PDF gives the widths in /W; zeros compress to nothing).
  const hmtx = table('hmtx');
  const metrics = table('hhea').readUInt16BE(34);
  const newHmtx = Buffer.alloc(hmtx.length);
  for (const id of keep) {
    if (id < metrics) hmtx.copy(newHmtx, 4 * id, 4 * id, 4 * id + 4);
    else hmtx.copy(newHmtx, 4 * metrics + 2 * (id - metrics), 4 * metrics + 2 * (id - metrics), 4 * metrics + 2 * (id - metrics) + 2);
  }

  head.writeUInt32BE(0, 8); // checkSumAdjustment, set below
  head.writeInt16BE(1, 50); // long loca offsets

  const post = Buffer.from(table('post').subarray(0, 32));
  post.writeUInt32BE(0x00030000, 0); // version 3: no glyph names

  const tables = new Map<string, Buffer>([
    ['cmap', cmapTable(chars)],
    ['glyf', Buffer.concat(parts)],
    ['head', head],
    ['hmtx', newHmtx],
    ['loca', newLoca],
    ['post', post],
  ]);
  for (const tag of COPIED) if (dir.has(tag)) tables.set(tag, Buffer.from(table(tag)));

  const tags = [...tables.keys()].sort();
  const log = Math.floor(Math.log2(tags.length));
  const header = Buffer.alloc(12 + 16 * tags.length);
  header.writeUInt32BE(0x00010000, 0);
  header.writeUInt16BE(tags.length, 4);
  header.writeUInt16BE(16 * 2 ** log, 6);
  header.writeUInt16BE(log, 8);
  header.writeUInt16BE(16 * tags.length - 16 * 2 ** log, 10);
  const body: Buffer[] = [];
  let at = header.length;
  tags.forEach((tag, i) => {
    const data = tables.get(tag)!;
    const e = 12 + 16 * i;
    header.write(tag, e, 4, 'latin1');
    header.writeUInt32BE(checksum(data), e + 4);
    header.writeUInt32BE(at, e + 8);
    header.writeUInt32BE(data.length, e + 12);
    const pad = (4 - (data.length % 4)) % 4;
    body.push(data, Buffer.alloc(pad));
    at += data.length + pad;
  });
  const out = Buffer.concat([header, ...body]);
  const headAt = header.readUInt32BE(12 + 16 * tags.indexOf('head') + 8);
  out.writeUInt32BE((0xb1b0afba - checksum(out)) >>> 0, headAt + 8);
  return out;
}
