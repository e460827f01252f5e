import { G, Line, Text as SvgText } from 'react-native-svg';
import { fonts, plotColors } from '@/themes/tokens';
import { TICK_FONT_SIZE, TICK_LENGTH, type Tick } from './quick-plot-geometry';

/**
 * The tick marks and labels of a quick plot's axis, below (`side="bottom"`, at `at` = the
 * drawing area's lower edge) or left of it (`side="left"`, `at` = its left edge). A tick with an
 * empty label is a mark only. Labels are text children, never markup.
 */
export function AxisTicks({ ticks, side, at }: { ticks: Tick[]; side: 'bottom' | 'left'; at: number }) {
  return (
    <G>
      {ticks.map((t) =>
        side === 'bottom' ? (
          <G key={`tx${t.value}`}>
            <Line x1={t.pos} x2={t.pos} y1={at} y2={at + TICK_LENGTH} stroke={plotColors.axis} />
            {t.label ? (
              <SvgText x={t.labelPos ?? t.pos} y={at + TICK_LENGTH + 12} fontSize={TICK_FONT_SIZE} fontFamily={fonts.regular} fill={plotColors.axis} textAnchor="middle">
                {t.label}
              </SvgText>
            ) : null}
          </G>
        ) : (
          <G key={`ty${t.value}`}>
            <Line x1={at - TICK_LENGTH} x2={at} y1={t.pos} y2={t.pos} stroke={plotColors.axis} />
            {t.label ? (
              <SvgText x={at - TICK_LENGTH - 3} y={t.pos + 4} fontSize={TICK_FONT_SIZE} fontFamily={fonts.regular} fill={plotColors.axis} textAnchor="end">
                {t.label}
              </SvgText>
            ) : null}
          </G>
        ),
      )}
    </G>
  );
}
