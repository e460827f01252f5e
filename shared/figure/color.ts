/**
 * Colour arithmetic for figure themes: sRGB ↔ CIELAB, the CIEDE2000 colour difference, lightness
 * for greyscale prints, and simulated colour-vision deficiency. Used to derive band tints and to
 * check that a palette stays distinguishable (tests, and the composer's house-style check).
 */

export type Rgb = [number, number, number];
export type Lab = [number, number, number];

const HEX = /^#([0-9a-f]{6})$/i;

/** `#rrggbb` → sRGB components in [0, 1]; throws on anything else (themes are validated data). */
export function parseHex(hex: string): Rgb {
  const m = HEX.exec(hex);
  if (!m) throw new Error(`not a colour like #1b3f8b: ${hex}`);
  const n = parseInt(m[1]!, 16);
  return [((n >> 16) & 255) / 255, ((n >> 8) & 255) / 255, (n & 255) / 255];
}

/** sRGB components in [0, 1] → `#rrggbb` (clamped, rounded). */
export function toHex(rgb: Rgb): string {
  return `#${rgb.map((c) => Math.round(Math.min(1, Math.max(0, c)) * 255).toString(16).padStart(2, '0')).join('')}`;
}

/** sRGB-encoded component → linear light (the sRGB transfer function, IEC 61966-2-1:1999). */
export function srgbToLinear(c: number): number {
  return c <= 0.04045 ? c / 12.92 : ((c + 0.055) / 1.055) ** 2.4;
}
/** Linear light → sRGB-encoded component, clamped to [0, 1] (IEC 61966-2-1:1999). */
export function linearToSrgb(c: number): number {
  const v = Math.min(1, Math.max(0, c));
  return v <= 0.0031308 ? 12.92 * v : 1.055 * v ** (1 / 2.4) - 0.055;
}

/**
 * Mixes a colour with white in linear light: t = 0 gives the colour, t = 1 white. Mixing in linear
 * light keeps a tint's hue (mixing gamma-encoded values greys it).
 */
export function tint(hex: string, t: number): string {
  const k = Math.min(1, Math.max(0, t));
  return toHex(parseHex(hex).map((c) => linearToSrgb(srgbToLinear(c) * (1 - k) + k)) as Rgb);
}

/**
 * The colour at t (0…1) of a sequential ramp, interpolated in linear light between equally spaced
 * stops: luminance is linear in linear light, so a ramp whose stops rise in lightness rises
 * between them too.
 */
export function rampColor(stops: readonly string[], t: number): string {
  const k = Math.min(1, Math.max(0, Number.isFinite(t) ? t : 0)) * (stops.length - 1);
  const i = Math.min(stops.length - 2, Math.floor(k));
  const f = k - i;
  const a = parseHex(stops[i]!).map(srgbToLinear);
  const b = parseHex(stops[i + 1]!).map(srgbToLinear);
  return toHex(a.map((v, c) => linearToSrgb(v * (1 - f) + b[c]! * f)) as Rgb);
}

// D65 reference white (CIE 15:2004), and the sRGB → XYZ matrix (IEC 61966-2-1:1999).
const WHITE: [number, number, number] = [0.95047, 1, 1.08883];

/** Relative luminance Y of linear-light sRGB (ITU-R BT.709 primaries, IEC 61966-2-1:1999). */
export function luminance(linear: Rgb): number {
  return 0.2126 * linear[0] + 0.7152 * linear[1] + 0.0722 * linear[2];
}

function labF(t: number): number {
  const d = 6 / 29;
  return t > d ** 3 ? Math.cbrt(t) : t / (3 * d * d) + 4 / 29;
}

/** Linear-light sRGB → CIELAB (CIE 1976 L*a*b*, D65 white; CIE 15:2004). */
export function linearToLab(linear: Rgb): Lab {
  const [r, g, b] = linear;
  const x = 0.4124 * r + 0.3576 * g + 0.1805 * b;
  const y = 0.2126 * r + 0.7152 * g + 0.0722 * b;
  const z = 0.0193 * r + 0.1192 * g + 0.9505 * b;
  const fx = labF(x / WHITE[0]);
  const fy = labF(y / WHITE[1]);
  const fz = labF(z / WHITE[2]);
  return [116 * fy - 16, 500 * (fx - fy), 200 * (fy - fz)];
}

/** `#rrggbb` → CIELAB. */
export function hexToLab(hex: string): Lab {
  return linearToLab(parseHex(hex).map(srgbToLinear) as Rgb);
}

/**
 * CIE lightness L* of a colour printed in greyscale: L* of its relative luminance (CIE 1976),
 * the grey a luminance-preserving conversion gives.
 */
export function greyLightness(hex: string): number {
  return 116 * labF(luminance(parseHex(hex).map(srgbToLinear) as Rgb)) - 16;
}

const deg = Math.PI / 180;

/**
 * CIEDE2000 colour difference ΔE00 (kL = kC = kH = 1), following G. Sharma, W. Wu, E. N. Dalal,
 * "The CIEDE2000 color-difference formula: implementation notes, supplementary test data, and
 * mathematical observations", Color Research & Application 30 (2005) 21–30. About 1 is a just
 * noticeable difference; lines in a figure want tens.
 */
export function ciede2000(lab1: Lab, lab2: Lab): number {
  const [L1, a1, b1] = lab1;
  const [L2, a2, b2] = lab2;
  const C1 = Math.hypot(a1, b1);
  const C2 = Math.hypot(a2, b2);
  const Cbar7 = ((C1 + C2) / 2) ** 7;
  const G = 0.5 * (1 - Math.sqrt(Cbar7 / (Cbar7 + 25 ** 7)));
  const a1p = (1 + G) * a1;
  const a2p = (1 + G) * a2;
  const C1p = Math.hypot(a1p, b1);
  const C2p = Math.hypot(a2p, b2);
  const hue = (b: number, ap: number) => (b === 0 && ap === 0 ? 0 : ((Math.atan2(b, ap) / deg) % 360 + 360) % 360);
  const h1p = hue(b1, a1p);
  const h2p = hue(b2, a2p);

  const dLp = L2 - L1;
  const dCp = C2p - C1p;
  let dhp = 0;
  if (C1p * C2p !== 0) {
    dhp = h2p - h1p;
    if (dhp > 180) dhp -= 360;
    else if (dhp < -180) dhp += 360;
  }
  const dHp = 2 * Math.sqrt(C1p * C2p) * Math.sin((dhp / 2) * deg);

  const Lbarp = (L1 + L2) / 2;
  const Cbarp = (C1p + C2p) / 2;
  let hbarp = h1p + h2p;
  if (C1p * C2p !== 0) {
    if (Math.abs(h1p - h2p) <= 180) hbarp = (h1p + h2p) / 2;
    else hbarp = h1p + h2p < 360 ? (h1p + h2p + 360) / 2 : (h1p + h2p - 360) / 2;
  }
  const T =
    1 -
    0.17 * Math.cos((hbarp - 30) * deg) +
    0.24 * Math.cos(2 * hbarp * deg) +
    0.32 * Math.cos((3 * hbarp + 6) * deg) -
    0.2 * Math.cos((4 * hbarp - 63) * deg);
  const dTheta = 30 * Math.exp(-(((hbarp - 275) / 25) ** 2));
  const Cbarp7 = Cbarp ** 7;
  const Rc = 2 * Math.sqrt(Cbarp7 / (Cbarp7 + 25 ** 7));
  const Sl = 1 + (0.015 * (Lbarp - 50) ** 2) / Math.sqrt(20 + (Lbarp - 50) ** 2);
  const Sc = 1 + 0.045 * Cbarp;
  const Sh = 1 + 0.015 * Cbarp * T;
  const Rt = -Math.sin(2 * dTheta * deg) * Rc;
  const l = dLp / Sl;
  const c = dCp / Sc;
  const h = dHp / Sh;
  return Math.sqrt(l * l + c * c + h * h + Rt * c * h);
}

/** Colour vision to simulate: normal, or the two common red–green dichromacies. */
export type VisionKind = 'normal' | 'protanopia' | 'deuteranopia';

/**
 * Simulation matrices for dichromats at severity 1.0, applied to linear-light RGB: G. M. Machado,
 * M. M. Oliveira, L. A. F. Fernandes, "A physiologically-based model for simulation of color
 * vision deficiency", IEEE TVCG 15 (2009) 1291–1298 (values from memory; each row sums to 1,
 * which a test checks, so white and greys stay as they are).
 */
export const CVD_MATRICES: Record<Exclude<VisionKind, 'normal'>, readonly [number, number, number][]> = {
  protanopia: [
    [0.152286, 1.052583, -0.204868],
    [0.114503, 0.786281, 0.099216],
    [-0.003882, -0.048116, 1.051998],
  ],
  deuteranopia: [
    [0.367322, 0.860646, -0.227968],
    [0.280085, 0.672501, 0.047413],
    [-0.01182, 0.04294, 0.968881],
  ],
};

/** A colour as seen with the given colour vision, `#rrggbb` (out-of-gamut results clamped). */
export function simulateVision(hex: string, kind: VisionKind): string {
  if (kind === 'normal') return toHex(parseHex(hex));
  const lin = parseHex(hex).map(srgbToLinear) as Rgb;
  const m = CVD_MATRICES[kind];
  const out = m.map((row) => linearToSrgb(row[0] * lin[0] + row[1] * lin[1] + row[2] * lin[2])) as Rgb;
  return toHex(out);
}

/** The smallest difference over all pairs of `colors` under one vision: ΔE00, or ΔL* for greyscale. */
export function minPairDifference(colors: readonly string[], mode: VisionKind | 'greyscale'): { value: number; pair: [number, number] } {
  let best = { value: Infinity, pair: [0, 0] as [number, number] };
  for (let i = 0; i < colors.length; i++) {
    for (let j = i + 1; j < colors.length; j++) {
      const a = colors[i]!;
      const b = colors[j]!;
      const d =
        mode === 'greyscale'
          ? Math.abs(greyLightness(a) - greyLightness(b))
          : ciede2000(hexToLab(simulateVision(a, mode)), hexToLab(simulateVision(b, mode)));
      if (d < best.value) best = { value: d, pair: [i, j] };
    }
  }
  return best;
}

/** Minimum differences a figure palette's first six colours must keep (see the theme tests). */
export const PALETTE_THRESHOLDS = { normal: 20, protanopia: 10, deuteranopia: 10, greyscale: 7 } as const;

/**
 * Where a palette falls short of `PALETTE_THRESHOLDS` for its first six colours, in plain words
 * (empty when it passes), e.g. for a house style a group is about to save.
 */
export function paletteProblems(palette: readonly string[]): string[] {
  const first = palette.slice(0, 6);
  const problems: string[] = [];
  const names: Record<keyof typeof PALETTE_THRESHOLDS, string> = {
    normal: 'with normal colour vision',
    protanopia: 'for readers with protanopia',
    deuteranopia: 'for readers with deuteranopia',
    greyscale: 'when printed in greyscale',
  };
  for (const mode of Object.keys(PALETTE_THRESHOLDS) as (keyof typeof PALETTE_THRESHOLDS)[]) {
    const { value, pair } = minPairDifference(first, mode);
    if (value < PALETTE_THRESHOLDS[mode]) problems.push(`colours ${pair[0] + 1} and ${pair[1] + 1} look too alike ${names[mode]}`);
  }
  return problems;
}

/**
 * A layer colour from a free hue (degrees, wrapping): HSL with saturation 0.7 and lightness 0.4
 * (the usual HSL to RGB conversion), dark enough for a line on white, for the composer's free hue.
 */
export function hueColor(hueDeg: number): string {
  const h = (((Number.isFinite(hueDeg) ? hueDeg : 0) % 360) + 360) % 360;
  const s = 0.7;
  const l = 0.4;
  const c = (1 - Math.abs(2 * l - 1)) * s;
  const x = c * (1 - Math.abs(((h / 60) % 2) - 1));
  const m = l - c / 2;
  const [r, g, b] = h < 60 ? [c, x, 0] : h < 120 ? [x, c, 0] : h < 180 ? [0, c, x] : h < 240 ? [0, x, c] : h < 300 ? [x, 0, c] : [c, 0, x];
  return toHex([r + m, g + m, b + m]);
}
