import type { Curve, Theory, VersionMeta } from '../../shared/schemas/results';

/**
 * Invented limit results of the Lanternfish experiment at the fictional 18 TeV Halcyon Ring, for
 * the demo seed. The numbers follow a plausible shape and nothing else: expected limits falling
 * exponentially with mass, observed = expected × a smooth wiggle that stays inside ±1σ,
 * bands as log-normal widths (+35 %/−26 % at 1σ, +80 %/−44 % at 2σ). Deterministic: no random
 * numbers, so every seed gives the same figures.
 */

const round = (v: number) => Number(v.toPrecision(4));

/** `n` grid points from `from` in steps of `step` (rounded to avoid 1.2000000000000002). */
export function grid(from: number, step: number, n: number): number[] {
  return Array.from({ length: n }, (_, i) => Number((from + i * step).toFixed(6)));
}

/**
 * A limit curve on `x`: expected median `scale·exp(x/slope)` (slope < 0 falls), observed with a
 * smooth wiggle of relative size `wiggle` whose phase `phase` makes each result look different.
 */
export function limitCurve(x: number[], o: { scale: number; slope: number; wiggle: number; phase: number; observed?: boolean }): Curve {
  const exp = x.map((m) => o.scale * Math.exp(m / o.slope));
  const wiggle = (m: number, i: number) => Math.exp(o.wiggle * (Math.sin(2.3 * m + o.phase) + 0.4 * Math.sin(0.9 * i + 2 * o.phase)) / 1.4);
  const band = (f: number) => exp.map((e) => round(e * f));
  return {
    x,
    ...(o.observed === false ? {} : { observed: exp.map((e, i) => round(e * wiggle(x[i]!, i))) }),
    expected: { '-2': band(1 / 1.8), '-1': band(1 / 1.35), '0': band(1), '1': band(1.35), '2': band(1.8) },
  };
}

/** A theory prediction `scale·exp(x/slope)` with a band growing from ±10 % with the parameter. */
export function theoryCurve(x: number[], o: { scale: number; slope: number; label: string; band: number }): Theory {
  const central = x.map((m) => o.scale * Math.exp(m / o.slope));
  const width = (m: number) => 0.1 + o.band * (m - x[0]!);
  return {
    label: o.label,
    x,
    central: central.map(round),
    lower: central.map((c, i) => round(c * (1 - width(x[i]!)))),
    upper: central.map((c, i) => round(c * (1 + width(x[i]!)))),
  };
}

type DemoVersion = {
  meta: VersionMeta;
  curve: Curve;
  theory: Theory | null;
  changeNote?: string;
  /** What happens to the version after it is stored. */
  then: 'draft' | 'publish' | { retract: string };
};

export type DemoResult = {
  /** Fixed permanent link names: the seed's marker that a result is already there. */
  slug: string;
  group: string;
  uploader: string;
  publisher: string;
  isPublic: boolean;
  versions: DemoVersion[];
};

/**
 * The full 2031 run of the Halcyon Ring: 96.5 fb⁻¹ at 18 TeV, limits at 95 % CL. References follow
 * the experiment's own note series, "LFN <year>.<number>" (combinations "LFN-C …").
 */
export const RUN_2031 = { sqrtS: 18, luminosity: 96.5, cl: 0.95 } as const;

const VPRIME = {
  title: 'Search for a heavy vector boson V′ → two jets',
  model: 'Sequential V′ benchmark with quark couplings g_q = 0.25',
  parameterName: 'm(V′)',
  parameterUnit: 'TeV',
  quantity: 'xsec',
  quantityUnit: 'fb',
  ...RUN_2031,
  method: 'asymptotic',
} as const;

const vprimeTheory = (x: number[]) => theoryCurve(x, { scale: 975, slope: -0.62, label: 'V′ benchmark (NLO)', band: 0.02 });

/** The demo results, by group name (see DEMO_GROUPS in seed.ts) and uploader/publisher e-mail. */
export const DEMO_RESULTS: DemoResult[] = [
  {
    slug: 'vprime-dijet-18tev-lf7q2',
    group: 'Lanternfish Dijet Resonances',
    uploader: 'anouk@lanternfish.example',
    publisher: 'cyrus@lanternfish.example',
    isPublic: true,
    versions: [
      {
        meta: { ...VPRIME, luminosity: 41.7, reference: 'LFN 30.11', notes: 'First look at the 2030 data.' },
        curve: limitCurve(grid(1, 0.25, 21), { scale: 184, slope: -0.85, wiggle: 0.2, phase: 0.4 }),
        theory: vprimeTheory(grid(1, 0.25, 21)),
        then: 'publish',
      },
      {
        meta: { ...VPRIME, reference: 'LFN 31.04', notes: 'Dijet invariant mass spectrum fitted with a four-parameter background function.' },
        curve: limitCurve(grid(1, 0.2, 30), { scale: 120, slope: -0.85, wiggle: 0.22, phase: 1.1 }),
        theory: vprimeTheory(grid(1, 0.2, 30)),
        changeNote: 'Full 2031 dataset (96.5 fb⁻¹); mass range extended to 6.8 TeV; jet energy scale uncertainty halved',
        then: 'publish',
      },
    ],
  },
  {
    slug: 'scalar-bb-18tev-lf3k8',
    group: 'Lanternfish Dijet Resonances',
    uploader: 'anouk@lanternfish.example',
    publisher: 'orla@lanternfish.example',
    isPublic: false,
    versions: [
      {
        meta: {
          title: 'Search for a scalar resonance S → bb̄',
          model: 'Narrow scalar S, unit signal strength at σ_nominal',
          parameterName: 'm(S)',
          parameterUnit: 'TeV',
          quantity: 'mu',
          quantityUnit: '',
          ...RUN_2031,
          method: 'toys',
          reference: 'LFN 31.09 (internal)',
          notes: 'Two b-tagged jets; pseudo-experiments above 2.5 TeV where few events remain.',
        },
        curve: limitCurve(grid(0.5, 0.1, 26), { scale: 0.35, slope: 1.3, wiggle: 0.25, phase: 2.0 }),
        theory: null,
        then: 'publish',
      },
    ],
  },
  {
    slug: 'excited-quark-qg-lf9m4',
    group: 'Lanternfish Dijet Resonances',
    uploader: 'anouk@lanternfish.example',
    publisher: 'cyrus@lanternfish.example',
    isPublic: false,
    versions: [
      {
        meta: {
          title: 'Excited quark q* → qg, preliminary',
          model: 'Excited quark, compositeness scale Λ = m(q*)',
          parameterName: 'm(q*)',
          parameterUnit: 'TeV',
          quantity: 'xsec',
          quantityUnit: 'pb',
          ...RUN_2031,
          method: 'asymptotic',
          reference: '',
          notes: 'Not yet reviewed: the jet-timing cleaning is still being validated.',
        },
        curve: limitCurve(grid(2, 0.5, 15), { scale: 0.9, slope: -1.1, wiggle: 0.18, phase: 0.7 }),
        theory: theoryCurve(grid(2, 0.5, 15), { scale: 17.6, slope: -0.75, label: 'q* (LO × 1.3)', band: 0.015 }),
        then: 'draft',
      },
    ],
  },
  {
    slug: 'charged-boson-tb-18tev-lf5w1',
    group: 'Lanternfish Dijet Resonances',
    uploader: 'anouk@lanternfish.example',
    publisher: 'cyrus@lanternfish.example',
    isPublic: true,
    versions: [
      {
        meta: {
          title: 'Search for a heavy charged boson W* → tb',
          model: 'Right-handed W* benchmark',
          parameterName: 'm(W*)',
          parameterUnit: 'TeV',
          quantity: 'xsec',
          quantityUnit: 'fb',
          ...RUN_2031,
          method: 'asymptotic',
          reference: 'LFN 31.02',
          notes: '',
        },
        curve: limitCurve(grid(1.5, 0.25, 15), { scale: 95, slope: -0.9, wiggle: 0.2, phase: 2.6 }),
        theory: theoryCurve(grid(1.5, 0.25, 15), { scale: 318, slope: -0.7, label: 'W* benchmark (NLO)', band: 0.02 }),
        then: {
          retract:
            'The b-tagging efficiency correction was applied twice in the signal region, which made these limits too strong by up to 30 %. A corrected analysis is in preparation.',
        },
      },
    ],
  },
  {
    slug: 'combined-vprime-18tev-lfc01',
    group: 'Lanternfish Combination Board',
    uploader: 'anouk@lanternfish.example',
    publisher: 'cyrus@lanternfish.example',
    isPublic: true,
    versions: [
      {
        meta: {
          ...VPRIME,
          title: 'Combined limits on the V′ benchmark from dijet and dilepton searches',
          reference: 'LFN-C 31.01',
          notes: 'Joint likelihood of the dijet and dilepton channels; lepton and jet energy scales correlated.',
        },
        curve: limitCurve(grid(1, 0.25, 25), { scale: 70, slope: -0.82, wiggle: 0.15, phase: 1.7 }),
        theory: vprimeTheory(grid(1, 0.25, 25)),
        then: 'publish',
      },
    ],
  },
  {
    slug: 'portal-scalar-summary-lfc02',
    group: 'Lanternfish Combination Board',
    uploader: 'anouk@lanternfish.example',
    publisher: 'cyrus@lanternfish.example',
    isPublic: true,
    versions: [
      {
        meta: {
          title: 'Summary of signal-strength limits on the Heron portal scalar',
          model: 'Heron portal scalar, mixing angle sin θ = 0.1',
          parameterName: 'm(H′)',
          parameterUnit: 'GeV',
          quantity: 'mu',
          quantityUnit: '',
          ...RUN_2031,
          method: 'imported',
          reference: 'LFN-C 31.03',
          notes: 'Best expected channel per mass point (bb̄, WW, ZZ).',
        },
        curve: limitCurve(grid(300, 50, 19), { scale: 0.12, slope: 420, wiggle: 0.2, phase: 0.2 }),
        theory: null,
        then: 'publish',
      },
    ],
  },
];

