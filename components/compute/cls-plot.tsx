import { scaleLinear, scaleLog } from 'd3-scale';
import { line } from 'd3-shape';
import { useMemo, useState } from 'react';
import { StyleSheet, View, type LayoutChangeEvent } from 'react-native';
import Svg, { G, Line, Path, Text as SvgText } from 'react-native-svg';
import type { ClsSample } from '@/shared/schemas/counting-model';
import { powerOfTen } from '@/shared/figure/ticks';
import { Text } from '@/components/ui/text';
import { fonts, plotColors, space } from '@/themes/tokens';

const M = { top: 10, right: 14, bottom: 40, left: 52 };

/**
 * The diagnostic curve of one limit: CLs, CLs+b and CLb against μ on a log scale, the α line
 * (1 − CL) and the observed limit where CLs crosses it.
 */
export function ClsPlot({ samples, cl, limit, height = 240 }: { samples: ClsSample[]; cl: number; limit: number; height?: number }) {
  const [width, setWidth] = useState(0);
  const alpha = 1 - cl;
  const geom = useMemo(() => {
    if (width < 120 || samples.length < 2) return null;
    const xs = samples.map((s) => s.mu);
    const floor = Math.min(alpha / 10, ...samples.flatMap((s) => [s.cls, s.clsb]).filter((v) => v > 0));
    const x = scaleLinear().domain([Math.min(...xs), Math.max(...xs)]).range([M.left, width - M.right]).nice();
    const y = scaleLog().domain([Math.max(floor, 1e-6), 1]).range([height - M.bottom, M.top]).clamp(true);
    const path = (key: 'cls' | 'clsb' | 'clb') =>
      line<ClsSample>()
        .x((s) => x(s.mu))
        .y((s) => y(Math.max(s[key], 1e-6)))(samples) ?? '';
    return { x, y, paths: { cls: path('cls'), clsb: path('clsb'), clb: path('clb') }, xTicks: x.ticks(5), yTicks: y.ticks().filter((v) => Math.abs(Math.log10(v) % 1) < 1e-9) };
  }, [width, height, samples, alpha]);
  const onLayout = (e: LayoutChangeEvent) => setWidth(Math.floor(e.nativeEvent.layout.width));
  return (
    <View onLayout={onLayout} role="img" aria-label={`CLs, CLs+b and CLb against the signal strength μ; CLs reaches ${alpha.toFixed(2)} at μ = ${limit.toPrecision(3)}`}>
      {geom ? (
        <Svg width={width} height={height}>
          {geom.yTicks.map((v) => (
            <G key={`y${v}`}>
              <Line x1={M.left} x2={width - M.right} y1={geom.y(v)} y2={geom.y(v)} stroke={plotColors.grid} />
              <SvgText x={M.left - 6} y={geom.y(v) + 4} fontSize={10} textAnchor="end" fill={plotColors.axis} fontFamily={fonts.regular}>
                {v >= 0.01 ? String(v) : powerOfTen(Math.round(Math.log10(v)))}
              </SvgText>
            </G>
          ))}
          {geom.xTicks.map((v) => (
            <SvgText key={`x${v}`} x={geom.x(v)} y={height - M.bottom + 14} fontSize={10} textAnchor="middle" fill={plotColors.axis} fontFamily={fonts.regular}>
              {String(v)}
            </SvgText>
          ))}
          <SvgText x={(M.left + width - M.right) / 2} y={height - 6} fontSize={11} textAnchor="middle" fill={plotColors.axis} fontFamily={fonts.regular}>
            signal strength μ
          </SvgText>
          <Line x1={M.left} x2={width - M.right} y1={geom.y(alpha)} y2={geom.y(alpha)} stroke={plotColors.theory} strokeDasharray="4 3" />
          <SvgText x={width - M.right} y={geom.y(alpha) - 4} fontSize={10} textAnchor="end" fill={plotColors.theory} fontFamily={fonts.regular}>
            {`α = ${alpha.toFixed(2)}`}
          </SvgText>
          {Number.isFinite(limit) ? <Line x1={geom.x(limit)} x2={geom.x(limit)} y1={M.top} y2={height - M.bottom} stroke={plotColors.observed} strokeDasharray="2 3" /> : null}
          <Path d={geom.paths.clb} stroke={plotColors.axis} strokeWidth={1.5} strokeDasharray="6 3" fill="none" />
          <Path d={geom.paths.clsb} stroke={plotColors.band1} strokeWidth={2} fill="none" />
          <Path d={geom.paths.cls} stroke={plotColors.expected} strokeWidth={2.5} fill="none" />
        </Svg>
      ) : (
        <View style={{ height }} />
      )}
      <View style={styles.legend}>
        <Text variant="caption" style={{ color: plotColors.expected }}>━ CLs</Text>
        <Text variant="caption" style={{ color: plotColors.band1 }}>━ CLs+b</Text>
        <Text variant="caption" style={{ color: plotColors.axis }}>╍ CLb</Text>
        <Text variant="caption" style={{ color: plotColors.theory }}>╌ α</Text>
      </View>
    </View>
  );
}

const styles = StyleSheet.create({ legend: { flexDirection: 'row', flexWrap: 'wrap', gap: space.md, justifyContent: 'center' } });
