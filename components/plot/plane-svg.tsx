import Svg, { G, Path, Rect, Text as SvgText } from 'react-native-svg';
import { fonts, planeStateColors, plotColors } from '@/themes/tokens';
import { AxisTicks } from './axis-ticks';
import type { PlaneCell, PlanePreviewGeometry } from './plane-preview-geometry';

const LINE_STYLE: Record<string, { stroke: string; dash?: string; width: number }> = {
  observed: { stroke: plotColors.observed, width: 2 },
  observed_theory_lower: { stroke: plotColors.observed, dash: '2 3', width: 1.2 },
  observed_theory_upper: { stroke: plotColors.observed, dash: '2 3', width: 1.2 },
  expected: { stroke: plotColors.expected, dash: '7 4', width: 2 },
  expected_minus_1sigma: { stroke: plotColors.expected, dash: '2 3', width: 1.2 },
  expected_plus_1sigma: { stroke: plotColors.expected, dash: '2 3', width: 1.2 },
};

const SEAM = 0.5;

/** Below this size (px) a cell is filled only (in its outline's colour): an outline would cover it. */
const OUTLINE_MIN = 5;

/** A cell drawn by its state: done in its ramp colour, the others as the scan page's key shows them. */
function Cell({ c }: { c: PlaneCell }) {
  // Half a pixel over the neighbour to the right and above: abutting anti-aliased edges would leave light seams (the frame covers the outer half pixel).
  if (c.state === 'done') return <Rect x={c.x} y={c.y - SEAM} width={c.w + SEAM} height={c.h + SEAM} fill={c.fill} />;
  const outline = Math.min(c.w, c.h) >= OUTLINE_MIN;
  const style =
    c.state === 'running'
      ? { fill: planeStateColors.runningFill, stroke: planeStateColors.runningStroke, width: 1.5 }
      : c.state === 'failed'
        ? { fill: planeStateColors.failedFill, stroke: planeStateColors.failedFill, width: 1 }
        : c.state === 'cancelled'
          ? { fill: planeStateColors.pendingFill, stroke: planeStateColors.cancelledStroke, width: 1, dash: '2 2' }
          : { fill: planeStateColors.pendingFill, stroke: planeStateColors.pendingStroke, width: 1 };
  if (!outline) return <Rect x={c.x} y={c.y} width={c.w} height={c.h} fill={style.stroke} />;
  // Inset by half the stroke plus a pixel, so neighbouring outlines stay apart.
  const i = style.width / 2 + 1;
  return <Rect x={c.x + i} y={c.y + i} width={c.w - 2 * i} height={c.h - 2 * i} fill={style.fill} stroke={style.stroke} strokeWidth={style.width} strokeDasharray={'dash' in style ? style.dash : undefined} />;
}

/**
 * The plane's SVG: cells (coloured by their limit, or by their state on a scan's page), contour
 * lines, the frame, round ticks on both axes and the axis titles. Titles are text children, never
 * parsed as markup.
 */
export function PlaneSvg({ geom, xLabel, yLabel }: { geom: PlanePreviewGeometry; xLabel: string; yLabel: string }) {
  const { area } = geom;
  return (
    <Svg width={geom.width} height={geom.height}>
      <Rect x={area.x} y={area.y} width={area.width} height={area.height} fill={plotColors.background} />
      <G>
        {geom.cells.map((c) => (
          <Cell key={c.key} c={c} />
        ))}
      </G>
      {geom.failedMarks ? <Path d={geom.failedMarks} fill="none" stroke={planeStateColors.failedMark} strokeWidth={1.5} strokeLinecap="round" /> : null}
      {geom.lines.map((l) => {
        const s = LINE_STYLE[l.which] ?? LINE_STYLE.observed!;
        return <Path key={l.key} d={l.d} fill="none" stroke={s.stroke} strokeWidth={s.width} strokeDasharray={s.dash} />;
      })}
      <Rect x={area.x} y={area.y} width={area.width} height={area.height} fill="none" stroke={plotColors.axis} strokeWidth={1} />
      <AxisTicks ticks={geom.xTicks} side="bottom" at={area.y + area.height} />
      <AxisTicks ticks={geom.yTicks} side="left" at={area.x} />
      <SvgText x={area.x + area.width / 2} y={geom.height - 6} fontSize={12} fontFamily={fonts.medium} fill={plotColors.observed} textAnchor="middle">
        {xLabel}
      </SvgText>
      <SvgText x={12} y={area.y + area.height / 2} fontSize={12} fontFamily={fonts.medium} fill={plotColors.observed} textAnchor="middle" transform={`rotate(-90 12 ${area.y + area.height / 2})`}>
        {yLabel}
      </SvgText>
    </Svg>
  );
}
