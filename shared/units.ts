import type { Curve, Quantity, Theory } from './schemas/results';

/**
 * Units of limit curves and the one conversion between them, used wherever curves of several
 * results meet: figure layers on one pair of axes, and derived results built from several inputs.
 * A parameter in an energy unit converts between eV … PeV; a cross-section between ab, fb, pb and
 * nb; any other parameter unit only matches itself. Limits on μ and on σ×B never share an axis.
 */

/** Energy units in GeV (1 TeV = 1000 GeV, common practice; SI prefixes). */
export const ENERGY_UNITS: Readonly<Record<string, number>> = { eV: 1e-9, keV: 1e-6, MeV: 1e-3, GeV: 1, TeV: 1e3, PeV: 1e6 };
/** Cross-section units in fb (1 pb = 1000 fb, 1 fb = 1000 ab; SI prefixes of the barn). */
export const XSEC_UNIT_FB: Readonly<Record<string, number>> = { ab: 1e-3, fb: 1, pb: 1e3, nb: 1e6 };

/** What decides whether two curves can share axes. */
export type LimitUnits = { parameterUnit: string; quantity: Quantity; quantityUnit: string };

/** Factors that take values in one result's units to another's: x for the parameter, y for the limit (and theory). */
export type UnitConversion = { ok: true; x: number; y: number } | { ok: false; reason: string };

const name = (u: string) => (u.trim() ? `“${u.trim()}”` : 'no unit');

/** The factors that convert curves in `from` units to `to` units, or why they cannot be converted. */
export function conversionTo(from: LimitUnits, to: LimitUnits): UnitConversion {
  if (from.quantity !== to.quantity) {
    const what = (q: Quantity) => (q === 'mu' ? 'the signal strength μ' : 'σ×B');
    return { ok: false, reason: `it limits ${what(from.quantity)}, the axis shows ${what(to.quantity)}` };
  }
  const fp = from.parameterUnit.trim();
  const tp = to.parameterUnit.trim();
  let x: number;
  if (fp === tp) x = 1;
  else if (fp in ENERGY_UNITS && tp in ENERGY_UNITS) x = ENERGY_UNITS[fp]! / ENERGY_UNITS[tp]!;
  else return { ok: false, reason: `its parameter is in ${name(fp)}, the axis in ${name(tp)}, which do not convert` };
  let y = 1;
  if (from.quantity === 'xsec') {
    const fq = from.quantityUnit.trim();
    const tq = to.quantityUnit.trim();
    if (fq !== tq) {
      if (!(fq in XSEC_UNIT_FB && tq in XSEC_UNIT_FB)) return { ok: false, reason: `its σ×B is in ${name(fq)}, the axis in ${name(tq)}, which do not convert` };
      y = XSEC_UNIT_FB[fq]! / XSEC_UNIT_FB[tq]!;
    }
  }
  return { ok: true, x, y };
}

/**
 * The conversion of the parameter alone (y factor 1): for figures whose other axis is not the
 * limit (a summary of excluded ranges compares each result with its own theory, so μ and σ×B
 * results, or σ×B in different units, share its parameter axis).
 */
export function parameterConversionTo(from: LimitUnits, to: LimitUnits): UnitConversion {
  return conversionTo({ ...from, quantity: to.quantity, quantityUnit: to.quantityUnit }, to);
}

/** True when the conversion changes nothing. */
export const isIdentity = (c: UnitConversion) => c.ok && c.x === 1 && c.y === 1;

const times = (f: number) => (v: number) => v * f;

/** A limit curve in other units: x values times `c.x`, every limit times `c.y`. */
export function convertCurve(curve: Curve, c: { x: number; y: number }): Curve {
  const y = times(c.y);
  const out: Curve = { ...curve, x: curve.x.map(times(c.x)) };
  if (curve.observed) out.observed = curve.observed.map(y);
  if (curve.expected) out.expected = Object.fromEntries(Object.entries(curve.expected).flatMap(([k, v]) => (v ? [[k, v.map(y)]] : []))) as Curve['expected'];
  return out;
}

/** A theory curve in other units (the same factors as its limit curve). */
export function convertTheory(theory: Theory, c: { x: number; y: number }): Theory {
  const y = times(c.y);
  return {
    ...theory,
    x: theory.x.map(times(c.x)),
    central: theory.central.map(y),
    ...(theory.lower ? { lower: theory.lower.map(y) } : {}),
    ...(theory.upper ? { upper: theory.upper.map(y) } : {}),
  };
}

/** Names a unit change for a note ("GeV → TeV, pb → fb"), or '' when nothing changes. */
export function describeConversion(from: LimitUnits, to: LimitUnits): string {
  const parts: string[] = [];
  if (from.parameterUnit.trim() !== to.parameterUnit.trim()) parts.push(`${from.parameterUnit.trim()} → ${to.parameterUnit.trim()}`);
  if (from.quantity === 'xsec' && from.quantityUnit.trim() !== to.quantityUnit.trim()) parts.push(`${from.quantityUnit.trim()} → ${to.quantityUnit.trim()}`);
  return parts.join(', ');
}
