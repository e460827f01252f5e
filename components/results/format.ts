/**
 * How results read on screen: provenance with units, excluded ranges, states and dates. Pure
 * functions, shared by the result page, the permanent link page and the lists.
 */
import { formatValue } from '@/components/plot/quick-plot-geometry';
import type { ExcludedRange } from '@/shared/stats/exclusion';
import type { ResultState, VersionMeta } from '@/shared/schemas/results';

export { formatValue };

export const STATE_LABELS: Record<ResultState, string> = {
  draft: 'Draft',
  published: 'Published',
  superseded: 'Superseded',
  retracted: 'Retracted',
};

type MetaForLabels = Pick<VersionMeta, 'parameterName' | 'parameterUnit' | 'quantity' | 'quantityUnit'>;

/** "95%" for 0.95, "68.3%" for 0.683. */
export function formatCl(cl: number): string {
  return `${Number((cl * 100).toPrecision(4))}%`;
}

/** "μ", or "σ×B [fb]". */
export function quantityLabel(meta: Pick<VersionMeta, 'quantity' | 'quantityUnit'>): string {
  return meta.quantity === 'mu' ? 'μ' : `σ×B${meta.quantityUnit ? ` [${meta.quantityUnit}]` : ''}`;
}

/** "m(Z′) [TeV]". */
export function parameterLabel(meta: Pick<VersionMeta, 'parameterName' | 'parameterUnit'>): string {
  return `${meta.parameterName}${meta.parameterUnit ? ` [${meta.parameterUnit}]` : ''}`;
}

type ParameterCount = { parameterName: string; parameterUnit: string; parameters: 1 | 2; secondParameter: { name: string; unit: string } | null };

/**
 * The badge of a two-parameter result in lists and pickers: its text ("2 parameters: m_X × m_chi")
 * and its spoken name with the units; null for a result over one parameter (no badge).
 */
export function parametersBadge(r: ParameterCount): { text: string; label: string } | null {
  if (r.parameters !== 2) return null;
  const second = r.secondParameter ?? { name: 'a second parameter', unit: '' };
  const spoken = (name: string, unit: string) => (unit ? `${name} (${unit})` : name);
  return {
    text: `2 parameters: ${r.parameterName} × ${second.name}`,
    label: `Over two parameters: ${spoken(r.parameterName, r.parameterUnit)} and ${spoken(second.name, second.unit)}`,
  };
}

/** Axis titles of the quick plot. */
export function axisLabels(meta: MetaForLabels): { x: string; y: string } {
  return { x: parameterLabel(meta), y: `Upper limit on ${quantityLabel(meta)}` };
}

/** "√s = 18 TeV, L = 140 fb⁻¹, 95% CL". */
export function conditionsLine(meta: Pick<VersionMeta, 'sqrtS' | 'luminosity' | 'cl'>): string {
  return `√s = ${formatValue(meta.sqrtS)} TeV, L = ${formatValue(meta.luminosity)} fb⁻¹, ${formatCl(meta.cl)} CL`;
}

/** One excluded interval: "1.2–3.45 TeV", or with open ends "from below 1 to 3.45 TeV". */
export function formatRange(r: ExcludedRange, unit: string): string {
  const u = unit ? ` ${unit}` : '';
  if (!r.fromOpen && !r.toOpen) return `${formatValue(r.from)}–${formatValue(r.to)}${u}`;
  const from = r.fromOpen ? `below ${formatValue(r.from)}` : formatValue(r.from);
  const to = r.toOpen ? `above ${formatValue(r.to)}` : formatValue(r.to);
  return `from ${from} to ${to}${u}`;
}

/** "excluded: 1.2–3.45 TeV and 4–5 TeV", or "nothing excluded". */
export function formatRanges(ranges: ExcludedRange[] | undefined, unit: string): string {
  if (!ranges || ranges.length === 0) return 'nothing excluded';
  return `excluded: ${ranges.map((r) => formatRange(r, unit)).join(' and ')}`;
}

/** Dates the same everywhere: see shared/dates.ts. */
export { formatDate, formatDateTime } from '@/shared/dates';

/** The app path of a version's permanent link. */
export function permalinkPath(slug: string, version: number): string {
  return `/r/${slug}/v${version}`;
}

/** "v3" → 3; anything else → null. */
export function parseVersionSegment(segment: string | undefined): number | null {
  const m = /^v(\d{1,6})$/.exec(segment ?? '');
  const n = m ? Number(m[1]) : NaN;
  return Number.isInteger(n) && n > 0 ? n : null;
}
