/**
 * The figure's data export (one CSV of every plotted curve) and a caption draft. Both list only
 * what the figure draws, and nothing of layers the viewer may not see.
 */
import type { FigureSpec } from '../schemas/figures';
import { labelPlainText } from './labels';
import { canCompare, drawnLayers, shortNumber, type DrawnLayer } from './plan';
import { planeLayers } from './plane';
import { planRanges, type RangeBar } from './ranges';
import { resolveFigureTheme } from './theme';
import type { FigureLayerData } from './types';

/** A CSV cell: quoted when needed; text that a spreadsheet would run as a formula is defused. */
function cell(v: string | number): string {
  if (typeof v === 'number') return String(v);
  const text = /^[=+\-@\t\r]/.test(v) ? `'${v}` : v;
  return /[",\r\n]/.test(text) ? `"${text.replace(/"/g, '""')}"` : text;
}

/** The plotted columns of a layer: quantity name, x values, y values. */
function plottedColumns(l: DrawnLayer): [string, readonly number[], readonly number[] | undefined][] {
  const c = l.data.curve;
  const e = c.expected;
  const out: [string, readonly number[], readonly number[] | undefined][] = [];
  if (l.spec.show.observed) out.push(['observed', c.x, c.observed]);
  if (l.spec.show.expected) out.push(['expected', c.x, e?.['0']]);
  if (l.band2) out.push(['expected_minus_2sigma', c.x, e?.['-2']]);
  if (l.band1) out.push(['expected_minus_1sigma', c.x, e?.['-1']]);
  if (l.band1) out.push(['expected_plus_1sigma', c.x, e?.['1']]);
  if (l.band2) out.push(['expected_plus_2sigma', c.x, e?.['2']]);
  if (l.theory) {
    out.push(['theory', l.theory.x, l.theory.central]);
    if (l.spec.show.theoryBand) {
      out.push(['theory_lower', l.theory.x, l.theory.lower]);
      out.push(['theory_upper', l.theory.x, l.theory.upper]);
    }
  }
  return out;
}

/**
 * Every plotted curve as one CSV: `layer,quantity,x,value,x_unit,value_unit`, one row per point,
 * layers in figure order. Only what the figure draws (its theme's band rule included); layers the
 * viewer may not see are left out.
 */
export function figureCsv(spec: FigureSpec, layers: FigureLayerData[]): string {
  if (spec.kind === 'ranges') return rangesCsv(spec, layers);
  if (spec.kind === 'plane') return planeCsv(spec, layers);
  const theme = resolveFigureTheme(spec.theme);
  const rows = ['layer,quantity,x,value,x_unit,value_unit'];
  for (const l of drawnLayers(spec, layers, theme).drawn) {
    const meta = l.data.meta;
    const valueUnit = meta.quantity === 'xsec' ? meta.quantityUnit : '';
    for (const [quantity, xs, ys] of plottedColumns(l)) {
      if (!ys) continue;
      for (let i = 0; i < Math.min(xs.length, ys.length); i++) {
        rows.push([cell(labelPlainText(l.name)), quantity, cell(xs[i]!), cell(ys[i]!), cell(labelPlainText(meta.parameterUnit)), cell(labelPlainText(valueUnit))].join(','));
      }
    }
  }
  return `${rows.join('\r\n')}\r\n`;
}

function listing(items: string[]): string {
  if (items.length <= 1) return items.join('');
  return `${items.slice(0, -1).join(', ')} and ${items[items.length - 1]}`;
}

/**
 * A short caption draft in plain text: what is shown, the results with their references and
 * versions, the bands, theory, shading, energy and luminosity. Technical wording, or plain words
 * for the outreach theme. Results the viewer may not see are counted, never named.
 */
export function captionDraft(spec: FigureSpec, layers: FigureLayerData[]): string {
  if (spec.kind === 'ranges') return rangesCaption(spec, layers);
  if (spec.kind === 'plane') return planeCaption(spec, layers);
  const theme = resolveFigureTheme(spec.theme);
  const outreach = theme.name === 'outreach';
  const { drawn, hidden } = drawnLayers(spec, layers, theme);
  const parts: string[] = [];
  if (drawn.length === 0) {
    parts.push(outreach ? 'No results are shown.' : 'No results are shown in this figure.');
  } else {
    const first = drawn[0]!.data.meta;
    const cls = [...new Set(drawn.map((l) => shortNumber(l.data.meta.cl * 100)))].join('/');
    const quantity = first.quantity === 'xsec' ? `the cross-section times branching ratio σ×B${first.quantityUnit ? ` (${labelPlainText(first.quantityUnit)})` : ''}` : 'the signal strength μ';
    const param = `${first.parameterName}${first.parameterUnit ? ` (${first.parameterUnit})` : ''}`;
    const results = drawn.map((l) => {
      const ref = l.data.meta.reference.trim();
      return `${labelPlainText(l.name)} (${ref ? `${ref}, ` : ''}version ${l.data.version})`;
    });
    if (outreach) {
      parts.push(`How large a signal of new particles could still hide in the data, as a function of ${labelPlainText(param)}, from ${listing(results)}.`);
      parts.push('Solid lines: what the data allow; dashed lines: what was expected if there is no new particle.');
    } else {
      parts.push(`Observed (solid) and expected (dashed) ${cls}% CL upper limits on ${quantity} as a function of ${labelPlainText(param)}, from ${listing(results)}.`);
    }
    const bands = drawn.find((l) => l.band1 || l.band2);
    if (bands) {
      const which = [bands.band1 ? '±1σ' : null, bands.band2 ? '±2σ' : null].filter(Boolean).join(' and ');
      parts.push(outreach ? `The shaded band shows the range expected for ${labelPlainText(bands.name)}.` : `The ${which} bands around the expected limit of ${labelPlainText(bands.name)} are shown.`);
    }
    const theories = drawn.filter((l) => l.theory);
    if (theories.length) {
      const names = [...new Set(theories.map((l) => labelPlainText(l.theory!.label?.trim() || 'the theory prediction')))];
      parts.push(outreach ? `The dotted line is ${listing(names)}.` : `Dotted: ${listing(names)}${theories.some((l) => l.spec.show.theoryBand && l.theory!.lower) ? ', with its uncertainty band' : ''}.`);
    }
    const shading = spec.excludedShading ? drawn.find(canCompare) : undefined;
    if (shading) parts.push(outreach ? `The shaded area is ruled out by ${labelPlainText(shading.name)}.` : `The shaded region is excluded by the observed limit of ${labelPlainText(shading.name)}.`);
    const energies = [...new Set(drawn.map((l) => `√s = ${shortNumber(l.data.meta.sqrtS)} TeV, ${shortNumber(l.data.meta.luminosity)} fb⁻¹`))];
    parts.push(outreach ? `Collision energy: ${[...new Set(drawn.map((l) => `${shortNumber(l.data.meta.sqrtS)} TeV`))].join(', ')}.` : `${listing(energies)}.`);
  }
  if (hidden > 0) parts.push(hidden === 1 ? 'One further result is not shown.' : `${hidden} further results are not shown.`);
  return parts.join(' ');
}

/**
 * A summary of excluded ranges as CSV: `analysis,model,range,from,to,open_low,open_high,x_unit,note`,
 * one row per excluded range (`range` observed or expected), bars in drawing order; a bar with no
 * range has one row whose `range` says why ("no theory curve", "nothing excluded") and empty ends.
 * `open_low`/`open_high`: the range runs into the edge of what was computed.
 */
function rangesCsv(spec: FigureSpec, layers: FigureLayerData[]): string {
  const plan = planRanges(spec, layers, resolveFigureTheme(spec.theme));
  const rows = ['analysis,model,range,from,to,open_low,open_high,x_unit,note'];
  for (const row of plan.rows) {
    if (row.kind !== 'bar') continue;
    const b = row.bar;
    const head = [cell(labelPlainText(b.layer.name)), cell(labelPlainText(b.model))];
    const tail = [cell(labelPlainText(b.layer.data.meta.parameterUnit)), cell(labelPlainText(b.note))];
    const ranges = [...(b.observed ?? []).map((r) => ['observed', r] as const), ...(b.expected ?? []).map((r) => ['expected', r] as const)];
    if (ranges.length === 0) rows.push([...head, b.status === 'no-theory' ? 'no theory curve' : 'nothing excluded', '', '', '', '', ...tail].join(','));
    for (const [what, r] of ranges) rows.push([...head, what, cell(r.from), cell(r.to), r.fromOpen ? 'yes' : 'no', r.toOpen ? 'yes' : 'no', ...tail].join(','));
  }
  return `${rows.join('\r\n')}\r\n`;
}

/** "from 1.2 to 3.4 TeV" for the caption, open ends said in words. */
function rangeWords(b: RangeBar): string {
  const unit = labelPlainText(b.layer.data.meta.parameterUnit);
  const one = (r: { from: number; to: number; fromOpen?: boolean; toOpen?: boolean }) =>
    `${r.fromOpen ? 'below ' : 'from '}${shortNumber(r.fromOpen ? r.to : r.from)}${r.fromOpen ? '' : ` to ${shortNumber(r.to)}`}${r.toOpen && !r.fromOpen ? ' or more' : ''}${unit ? ` ${unit}` : ''}`;
  return listing((b.observed ?? []).map(one));
}

/** The caption draft of a summary of excluded ranges. */
function rangesCaption(spec: FigureSpec, layers: FigureLayerData[]): string {
  const theme = resolveFigureTheme(spec.theme);
  const outreach = theme.name === 'outreach';
  const plan = planRanges(spec, layers, theme);
  const { hidden } = drawnLayers(spec, layers, theme);
  const parts: string[] = [];
  const bars = plan.bars;
  if (bars.length === 0) parts.push(outreach ? 'No searches are shown.' : 'No results are shown in this figure.');
  else {
    const first = bars[0]!.layer.data.meta;
    const param = labelPlainText(`${first.parameterName}${first.parameterUnit ? ` (${first.parameterUnit})` : ''}`);
    const cls = [...new Set(bars.map((b) => shortNumber(b.layer.data.meta.cl * 100)))].join('/');
    parts.push(
      outreach
        ? `The ranges of ${param} that ${bars.length === 1 ? 'one search has' : `${bars.length} searches have`} ruled out, each compared with its theory prediction.`
        : `Ranges of ${param} excluded at ${cls}% CL by ${bars.length === 1 ? 'one analysis' : `${bars.length} analyses`}, each against its own theory prediction: filled bars observed${spec.ranges.expected === 'none' ? '' : spec.ranges.expected === 'marker' ? ', markers the expected (median) range' : ', outlines the expected (median) range'}.`,
    );
    for (const b of bars) {
      const name = `${labelPlainText(b.layer.name)}${outreach ? '' : ` (version ${b.layer.data.version})`}`;
      if (b.status === 'no-theory') parts.push(`${name}: no theory curve, so no range.`);
      else if (!b.observed || b.observed.length === 0) parts.push(`${name}: ${outreach ? 'nothing ruled out' : 'nothing excluded (observed)'}.`);
      else parts.push(`${name}: ${outreach ? 'ruled out' : 'excluded'} ${rangeWords(b)}.`);
    }
  }
  if (hidden > 0) parts.push(hidden === 1 ? 'One further result is not shown.' : `${hidden} further results are not shown.`);
  return parts.join(' ');
}

/**
 * A plane figure's drawn contours as CSV: `layer,line,piece,x,y,x_unit,y_unit`, one row per vertex,
 * layers in figure order; `line` is observed, expected, expected_minus/plus_1sigma or
 * observed_theory_lower/upper, `piece` the line's number (from 1) among that layer's lines of that
 * kind. A closed line's first vertex is not repeated. Only the lines the figure draws.
 */
function planeCsv(spec: FigureSpec, layers: FigureLayerData[]): string {
  const rows = ['layer,line,piece,x,y,x_unit,y_unit'];
  for (const l of planeLayers(spec, layers, resolveFigureTheme(spec.theme)).layers) {
    const head = cell(labelPlainText(l.name));
    const units = [cell(labelPlainText(l.data.meta.parameterUnit)), cell(labelPlainText(l.plane.plane.yUnit))].join(',');
    for (const group of l.lines) {
      group.lines.forEach((line, p) => {
        for (const [x, y] of line.points) rows.push([head, group.kind, p + 1, cell(x), cell(y), units].join(','));
      });
    }
  }
  return `${rows.join('\r\n')}\r\n`;
}

/** The caption draft of a plane figure. */
function planeCaption(spec: FigureSpec, layers: FigureLayerData[]): string {
  const theme = resolveFigureTheme(spec.theme);
  const outreach = theme.name === 'outreach';
  const { layers: drawn, hidden } = planeLayers(spec, layers, theme);
  const parts: string[] = [];
  if (drawn.length === 0) parts.push(outreach ? 'No searches are shown.' : 'No results are shown in this figure.');
  else {
    const first = drawn[0]!;
    const meta = first.data.meta;
    const px = labelPlainText(`${meta.parameterName}${meta.parameterUnit ? ` (${meta.parameterUnit})` : ''}`);
    const py = labelPlainText(`${first.plane.plane.yName}${first.plane.plane.yUnit ? ` (${first.plane.plane.yUnit})` : ''}`);
    const cls = [...new Set(drawn.map((l) => shortNumber(l.data.meta.cl * 100)))].join('/');
    const results = drawn.map((l) => {
      const ref = l.data.meta.reference.trim();
      return outreach ? labelPlainText(l.name) : `${labelPlainText(l.name)} (${ref ? `${ref}, ` : ''}version ${l.data.version})`;
    });
    if (outreach) {
      parts.push(`Where new particles are ruled out, by their two masses or settings ${px} and ${py}, from ${listing(results)}.`);
      parts.push('Solid lines: the edge of what the data rule out; dashed lines: the expected reach if there is no new particle.');
    } else {
      parts.push(`Observed (solid) and expected (dashed) ${cls}% CL exclusion contours in the plane of ${px} and ${py}, from ${listing(results)}.`);
      const withBand = drawn.filter((l) => l.lines.some((k) => k.kind === 'expected_minus_1sigma' || k.kind === 'expected_plus_1sigma'));
      if (withBand.some((l) => l.band1)) parts.push(`Shaded band: the region between the expected contours at ±1σ${drawn.length > 1 ? ` of ${listing(withBand.filter((l) => l.band1).map((l) => labelPlainText(l.name)))}` : ''}.`);
      if (withBand.some((l) => !l.band1)) parts.push('Thin dashed lines: the expected contours at ±1σ.');
      if (drawn.some((l) => l.lines.some((k) => k.kind.startsWith('observed_theory')))) parts.push('Thin solid lines: the observed contour with the theory prediction at its ±1σ edges.');
    }
    if (spec.plane.colorMap && first.plane.plane.observed) {
      const q = meta.quantity === 'xsec' ? `σ×B${meta.quantityUnit ? ` (${labelPlainText(meta.quantityUnit)})` : ''}` : 'the signal strength μ';
      parts.push(outreach ? `Colours: the smallest signal ruled out at each point by ${labelPlainText(first.name)}.` : `Colours: the observed ${shortNumber(meta.cl * 100)}% CL upper limit on ${q} of ${labelPlainText(first.name)} (log scale).`);
    }
    if (spec.plane.excludedMark !== 'none') parts.push(outreach ? `The ${spec.plane.excludedMark === 'hatch' ? 'ticked' : 'shaded'} side of each solid line is ruled out.` : `The excluded side of each observed contour is ${spec.plane.excludedMark === 'hatch' ? 'hatched' : 'shaded'}.`);
    const energies = [...new Set(drawn.map((l) => `√s = ${shortNumber(l.data.meta.sqrtS)} TeV, ${shortNumber(l.data.meta.luminosity)} fb⁻¹`))];
    parts.push(outreach ? `Collision energy: ${[...new Set(drawn.map((l) => `${shortNumber(l.data.meta.sqrtS)} TeV`))].join(', ')}.` : `${listing(energies)}.`);
  }
  if (hidden > 0) parts.push(hidden === 1 ? 'One further result is not shown.' : `${hidden} further results are not shown.`);
  return parts.join(' ');
}
