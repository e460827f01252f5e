/**
 * SVG path data under affine transforms: MathJax draws each glyph in its own unit system, nested
 * in translated and scaled groups; the typesetter flattens all of that into one path string in
 * points. Only geometry survives (numbers and command letters), so nothing from the input text
 * can reach the output as markup.
 */

/** Affine map (x, y) → (a·x + c·y + e, b·x + d·y + f), as in SVG's matrix(a b c d e f). */
export type Matrix = readonly [number, number, number, number, number, number];

export const IDENTITY: Matrix = [1, 0, 0, 1, 0, 0];

/** m1 ∘ m2: apply m2 first, then m1. */
export function multiply(m1: Matrix, m2: Matrix): Matrix {
  const [a1, b1, c1, d1, e1, f1] = m1;
  const [a2, b2, c2, d2, e2, f2] = m2;
  return [a1 * a2 + c1 * b2, b1 * a2 + d1 * b2, a1 * c2 + c1 * d2, b1 * c2 + d1 * d2, a1 * e2 + c1 * f2 + e1, b1 * e2 + d1 * f2 + f1];
}

export const translate = (x: number, y: number): Matrix => [1, 0, 0, 1, x, y];
export const scale = (sx: number, sy = sx): Matrix => [sx, 0, 0, sy, 0, 0];

/** The matrix of an SVG `transform` attribute (translate, scale, matrix, rotate; unknown parts are ignored). */
export function parseTransform(attr: string | null | undefined): Matrix {
  if (!attr) return IDENTITY;
  let m: Matrix = IDENTITY;
  const re = /(translate|scale|matrix|rotate)\s*\(([^)]*)\)/g;
  for (let hit = re.exec(attr); hit; hit = re.exec(attr)) {
    const n = (hit[2] ?? '').split(/[\s,]+/).filter(Boolean).map(Number);
    if (n.some((v) => !Number.isFinite(v))) continue;
    let t: Matrix = IDENTITY;
    if (hit[1] === 'translate') t = translate(n[0] ?? 0, n[1] ?? 0);
    else if (hit[1] === 'scale') t = scale(n[0] ?? 1, n[1] ?? n[0] ?? 1);
    else if (hit[1] === 'matrix' && n.length === 6) t = n as unknown as Matrix;
    else if (hit[1] === 'rotate') {
      const r = ((n[0] ?? 0) * Math.PI) / 180;
      const [cx, cy] = [n[1] ?? 0, n[2] ?? 0];
      t = multiply(translate(cx, cy), multiply([Math.cos(r), Math.sin(r), -Math.sin(r), Math.cos(r), 0, 0], translate(-cx, -cy)));
    }
    m = multiply(m, t);
  }
  return m;
}

const apply = (m: Matrix, x: number, y: number): [number, number] => [m[0] * x + m[2] * y + m[4], m[1] * x + m[3] * y + m[5]];

/** A number in path data: at most `decimals` places, no trailing zeros, no "-0". */
export function fmt(v: number, decimals = 2): string {
  const p = 10 ** decimals;
  const r = Math.round(v * p) / p;
  return r === 0 ? '0' : String(r);
}

export type Segment =
  | { c: 'M' | 'L'; p: [number, number] }
  | { c: 'Q'; p: [number, number, number, number] }
  | { c: 'C'; p: [number, number, number, number, number, number] }
  | { c: 'A'; p: [number, number, number, number, number, number, number] }
  | { c: 'Z'; p: [] };

const ARGS: Record<string, number> = { M: 2, L: 2, H: 1, V: 1, C: 6, S: 4, Q: 4, T: 2, A: 7, Z: 0 };

/**
 * Parses path data into absolute M/L/Q/C/A/Z segments (H/V become L, S/T become C/Q with the
 * reflected control point). Malformed data ends the parse where it stops making sense.
 */
export function parsePath(d: string): Segment[] {
  const tokens = d.match(/[MmLlHhVvCcSsQqTtAaZz]|[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?/g) ?? [];
  const out: Segment[] = [];
  let i = 0;
  let cmd = '';
  let [x, y, sx, sy] = [0, 0, 0, 0];
  let lastCtrl: [number, number] | null = null;
  let lastCmd = '';
  const num = () => {
    const t = tokens[i++];
    return t === undefined ? NaN : Number(t);
  };
  while (i < tokens.length) {
    const t = tokens[i]!;
    if (/[A-Za-z]/.test(t)) {
      cmd = t;
      i++;
      if (cmd === 'Z' || cmd === 'z') {
        out.push({ c: 'Z', p: [] });
        [x, y] = [sx, sy];
        lastCtrl = null;
        lastCmd = 'Z';
        continue;
      }
    } else if (!cmd || cmd === 'Z' || cmd === 'z') break;
    const upper = cmd.toUpperCase();
    const rel = cmd !== upper;
    const need = ARGS[upper] ?? 0;
    if (i + need > tokens.length) break;
    const a = Array.from({ length: need }, num);
    if (a.some((v) => !Number.isFinite(v))) break;
    const ox = rel ? x : 0;
    const oy = rel ? y : 0;
    switch (upper) {
      case 'M':
        x = a[0]! + ox;
        y = a[1]! + oy;
        [sx, sy] = [x, y];
        out.push({ c: 'M', p: [x, y] });
        // Further pairs after M are line-tos.
        cmd = rel ? 'l' : 'L';
        lastCtrl = null;
        break;
      case 'L':
        x = a[0]! + ox;
        y = a[1]! + oy;
        out.push({ c: 'L', p: [x, y] });
        lastCtrl = null;
        break;
      case 'H':
        x = a[0]! + ox;
        out.push({ c: 'L', p: [x, y] });
        lastCtrl = null;
        break;
      case 'V':
        y = a[0]! + (rel ? y : 0);
        out.push({ c: 'L', p: [x, y] });
        lastCtrl = null;
        break;
      case 'C': {
        const p: [number, number, number, number, number, number] = [a[0]! + ox, a[1]! + oy, a[2]! + ox, a[3]! + oy, a[4]! + ox, a[5]! + oy];
        out.push({ c: 'C', p });
        lastCtrl = [p[2], p[3]];
        [x, y] = [p[4], p[5]];
        break;
      }
      case 'S': {
        const [c1x, c1y]: [number, number] = lastCtrl && (lastCmd === 'C' || lastCmd === 'S') ? [2 * x - lastCtrl[0], 2 * y - lastCtrl[1]] : [x, y];
        const p: [number, number, number, number, number, number] = [c1x, c1y, a[0]! + ox, a[1]! + oy, a[2]! + ox, a[3]! + oy];
        out.push({ c: 'C', p });
        lastCtrl = [p[2], p[3]];
        [x, y] = [p[4], p[5]];
        break;
      }
      case 'Q': {
        const p: [number, number, number, number] = [a[0]! + ox, a[1]! + oy, a[2]! + ox, a[3]! + oy];
        out.push({ c: 'Q', p });
        lastCtrl = [p[0], p[1]];
        [x, y] = [p[2], p[3]];
        break;
      }
      case 'T': {
        const [cx, cy]: [number, number] = lastCtrl && (lastCmd === 'Q' || lastCmd === 'T') ? [2 * x - lastCtrl[0], 2 * y - lastCtrl[1]] : [x, y];
        const p: [number, number, number, number] = [cx, cy, a[0]! + ox, a[1]! + oy];
        out.push({ c: 'Q', p });
        lastCtrl = [cx, cy];
        [x, y] = [p[2], p[3]];
        break;
      }
      case 'A': {
        const p: [number, number, number, number, number, number, number] = [a[0]!, a[1]!, a[2]!, a[3]!, a[4]!, a[5]! + ox, a[6]! + oy];
        out.push({ c: 'A', p });
        lastCtrl = null;
        [x, y] = [p[5], p[6]];
        break;
      }
    }
    lastCmd = upper;
  }
  return out;
}

/** Path data through `m`, absolute commands, numbers rounded to `decimals` places. */
export function transformPath(d: string, m: Matrix, decimals = 2): string {
  return segmentsToPath(parsePath(d), m, decimals);
}

/** Segments through `m` as path data. */
export function segmentsToPath(segs: readonly Segment[], m: Matrix, decimals = 2): string {
  const f = (v: number) => fmt(v, decimals);
  const pt = (x: number, y: number) => {
    const [tx, ty] = apply(m, x, y);
    return `${f(tx)} ${f(ty)}`;
  };
  // Arcs survive only axis-aligned maps (all the typesetter makes); otherwise they become lines.
  const axisAligned = Math.abs(m[1]) < 1e-12 && Math.abs(m[2]) < 1e-12;
  const parts: string[] = [];
  for (const s of segs) {
    switch (s.c) {
      case 'M':
      case 'L':
        parts.push(`${s.c}${pt(s.p[0], s.p[1])}`);
        break;
      case 'Q':
        parts.push(`Q${pt(s.p[0], s.p[1])} ${pt(s.p[2], s.p[3])}`);
        break;
      case 'C':
        parts.push(`C${pt(s.p[0], s.p[1])} ${pt(s.p[2], s.p[3])} ${pt(s.p[4], s.p[5])}`);
        break;
      case 'A':
        if (axisAligned) {
          const flip = m[0] * m[3] < 0 ? 1 - s.p[4] : s.p[4];
          parts.push(`A${f(Math.abs(s.p[0] * m[0]))} ${f(Math.abs(s.p[1] * m[3]))} ${f(s.p[2])} ${s.p[3] ? 1 : 0} ${flip ? 1 : 0} ${pt(s.p[5], s.p[6])}`);
        } else parts.push(`L${pt(s.p[5], s.p[6])}`);
        break;
      case 'Z':
        parts.push('Z');
        break;
    }
  }
  return parts.join('');
}

export type Box = { x1: number; y1: number; x2: number; y2: number };

/** The box around every point of the path after `m` (control points included: a safe over-estimate). */
export function pathBox(d: string, m: Matrix = IDENTITY): Box | null {
  let box: Box | null = null;
  for (const s of parsePath(d)) {
    const p = s.c === 'A' ? [s.p[5], s.p[6]] : s.p;
    for (let k = 0; k + 1 < p.length; k += 2) {
      const [x, y] = apply(m, p[k]!, p[k + 1]!);
      box = box ? { x1: Math.min(box.x1, x), y1: Math.min(box.y1, y), x2: Math.max(box.x2, x), y2: Math.max(box.y2, y) } : { x1: x, y1: y, x2: x, y2: y };
    }
  }
  return box;
}

/** A filled rectangle (x, y, w, h in local units) through `m`. */
export function rectPath(x: number, y: number, w: number, h: number, m: Matrix, decimals = 2): string {
  return segmentsToPath(
    [
      { c: 'M', p: [x, y] },
      { c: 'L', p: [x + w, y] },
      { c: 'L', p: [x + w, y + h] },
      { c: 'L', p: [x, y + h] },
      { c: 'Z', p: [] },
    ],
    m,
    decimals,
  );
}

/** A number for compact path data: no leading zero, no trailing zeros ("-0.50" → "-.5"). */
function short(v: number): string {
  const s = String(v);
  return s.startsWith('0.') ? s.slice(1) : s.startsWith('-0.') ? `-${s.slice(2)}` : s;
}

/** Numbers joined without the spaces a minus sign makes redundant. */
function joinNumbers(vals: number[]): string {
  let out = '';
  for (const v of vals) {
    const s = short(v);
    out += out && !s.startsWith('-') ? ` ${s}` : s;
  }
  return out;
}

/**
 * A shape as relative path data: its first point (unrounded, after `m`) and the rest of the path
 * as relative commands from there (`body`, starting with the first command after the opening
 * move). Coordinates are rounded before differencing, so no error accumulates along a contour;
 * and the same segments through the same matrix give the same `body`, wherever the copy sits.
 * The matrix should be linear (no translation): place a copy with `placeRelative`.
 */
export function relativeBody(segs: readonly Segment[], m: Matrix, decimals = 2): { start: [number, number]; body: string } {
  const p = 10 ** decimals;
  const r = (v: number) => Math.round(v * p) / p;
  const d = (a: number, b: number) => Math.round((a - b) * p) / p;
  let start: [number, number] | null = null;
  let [cx, cy] = [0, 0];
  let [sx, sy] = [0, 0];
  let body = '';
  const axisAligned = Math.abs(m[1]) < 1e-12 && Math.abs(m[2]) < 1e-12;
  for (const s of segs) {
    if (s.c === 'Z') {
      body += 'z';
      [cx, cy] = [sx, sy];
      continue;
    }
    const pts: number[] = [];
    const coords = s.c === 'A' ? [s.p[5], s.p[6]] : s.p;
    for (let k = 0; k + 1 < coords.length; k += 2) {
      const [x, y] = apply(m, coords[k]!, coords[k + 1]!);
      pts.push(r(x), r(y));
    }
    if (!start) {
      if (s.c !== 'M') return { start: [0, 0], body: '' };
      start = [pts[0]!, pts[1]!];
      [cx, cy] = [sx, sy] = [pts[0]!, pts[1]!];
      continue;
    }
    const rel = pts.map((v, k) => d(v, k % 2 === 0 ? cx : cy));
    if (s.c === 'M') {
      body += `m${joinNumbers(rel)}`;
      [sx, sy] = [pts[0]!, pts[1]!];
    } else if (s.c === 'L') body += `l${joinNumbers(rel)}`;
    else if (s.c === 'Q') body += `q${joinNumbers(rel)}`;
    else if (s.c === 'C') body += `c${joinNumbers(rel)}`;
    else if (s.c === 'A') {
      if (axisAligned) {
        const flip = m[0] * m[3] < 0 ? 1 - s.p[4] : s.p[4];
        body += `a${joinNumbers([r(Math.abs(s.p[0] * m[0])), r(Math.abs(s.p[1] * m[3])), s.p[2], s.p[3] ? 1 : 0, flip ? 1 : 0, ...rel])}`;
      } else body += `l${joinNumbers(rel)}`;
    }
    [cx, cy] = [pts[pts.length - 2]!, pts[pts.length - 1]!];
  }
  return { start: start ?? [0, 0], body };
}

/** A copy of a relative shape with its first point at `start` moved by (dx, dy). */
export function placeRelative(shape: { start: [number, number]; body: string }, dx: number, dy: number, decimals = 2): string {
  if (!shape.body) return '';
  return `M${fmt(shape.start[0] + dx, decimals)} ${fmt(shape.start[1] + dy, decimals)}${shape.body}`;
}

/** The linear part of a matrix and its translation. */
export function splitMatrix(m: Matrix): { linear: Matrix; dx: number; dy: number } {
  return { linear: [m[0], m[1], m[2], m[3], 0, 0], dx: m[4], dy: m[5] };
}
