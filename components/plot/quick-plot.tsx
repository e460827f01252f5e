import { useMemo, useState } from 'react';
import { StyleSheet, View, type LayoutChangeEvent, type StyleProp, type ViewStyle } from 'react-native';
import Svg, { G, Line, Path, Rect, Text as SvgText } from 'react-native-svg';
import { Text } from '@/components/ui/text';
import { fonts, plotColors, space } from '@/themes/tokens';
import { AxisTicks } from './axis-ticks';
import { buildQuickPlot, describePlot, type PlotCurve, type PlotTheory } from './quick-plot-geometry';

export type QuickPlotProps = {
  curve: PlotCurve;
  theory?: PlotTheory;
  /** Axis titles, e.g. "m(Z′) [TeV]" and "σ×B [fb]". */
  xLabel: string;
  yLabel: string;
  height?: number;
};

/**
 * A quick look at a limit curve: ±2σ and ±1σ bands under the expected median (dashed) and the
 * observed limit (solid), theory dotted over its light band; log y whenever every value is > 0.
 * Sized to its container; every label is a text child, so titles are never parsed as markup.
 */
export function QuickPlot({ curve, theory, xLabel, yLabel, height = 280 }: QuickPlotProps) {
  const [width, setWidth] = useState(0);
  const geom = useMemo(() => buildQuickPlot({ width, height, curve, theory }), [width, height, curve, theory]);
  const summary = useMemo(() => describePlot(curve, theory, { x: xLabel, y: yLabel }), [curve, theory, xLabel, yLabel]);
  const onLayout = (e: LayoutChangeEvent) => {
    const w = Math.floor(e.nativeEvent.layout.width);
    if (w !== width) setWidth(w);
  };
  type LegendItem = { key: string; label: string; style: StyleProp<ViewStyle> };
  const legend = ([
    curve.observed ? { key: 'obs', label: 'Observed', style: styles.swatchObserved } : null,
    curve.expected?.['0'] ? { key: 'exp', label: 'Expected median', style: styles.swatchExpected } : null,
    curve.expected?.['-1'] && curve.expected['1'] ? { key: 'b1', label: '±1σ expected', style: styles.swatchBand1 } : null,
    curve.expected?.['-2'] && curve.expected['2'] ? { key: 'b2', label: '±2σ expected', style: styles.swatchBand2 } : null,
    theory ? { key: 'th', label: theory.lower && theory.upper ? 'Theory (with band)' : 'Theory', style: styles.swatchTheory } : null,
  ] as (LegendItem | null)[]).filter((l): l is LegendItem => !!l);

  return (
    <View style={styles.wrap}>
      <View role="img" aria-label={summary} onLayout={onLayout} style={{ height }}>
        {geom ? (
          <Svg width={geom.width} height={geom.height}>
            <Rect x={geom.area.x} y={geom.area.y} width={geom.area.width} height={geom.area.height} fill={plotColors.background} />
            <G>
              {geom.yTicks.map((t) => (
                <Line key={`gy${t.value}`} x1={geom.area.x} x2={geom.area.x + geom.area.width} y1={t.pos} y2={t.pos} stroke={plotColors.grid} strokeWidth={1} />
              ))}
              {geom.xTicks.map((t) => (
                <Line key={`gx${t.value}`} x1={t.pos} x2={t.pos} y1={geom.area.y} y2={geom.area.y + geom.area.height} stroke={plotColors.grid} strokeWidth={1} />
              ))}
            </G>
            {geom.paths.band2 ? <Path d={geom.paths.band2} fill={plotColors.band2} /> : null}
            {geom.paths.band1 ? <Path d={geom.paths.band1} fill={plotColors.band1} /> : null}
            {geom.paths.theoryBand ? <Path d={geom.paths.theoryBand} fill={plotColors.theoryBand} fillOpacity={0.75} /> : null}
            {geom.paths.theory ? <Path d={geom.paths.theory} fill="none" stroke={plotColors.theory} strokeWidth={2} strokeDasharray="2 3" strokeLinecap="round" /> : null}
            {geom.paths.expected ? <Path d={geom.paths.expected} fill="none" stroke={plotColors.expected} strokeWidth={2} strokeDasharray="7 4" /> : null}
            {geom.paths.observed ? <Path d={geom.paths.observed} fill="none" stroke={plotColors.observed} strokeWidth={2} /> : null}
            <Rect x={geom.area.x} y={geom.area.y} width={geom.area.width} height={geom.area.height} fill="none" stroke={plotColors.axis} strokeWidth={1} />
            <AxisTicks ticks={geom.xTicks} side="bottom" at={geom.area.y + geom.area.height} />
            <AxisTicks ticks={geom.yTicks} side="left" at={geom.area.x} />
            <SvgText x={geom.area.x + geom.area.width / 2} y={geom.height - 6} fontSize={12} fontFamily={fonts.medium} fill={plotColors.observed} textAnchor="middle">
              {xLabel}
            </SvgText>
            <SvgText
              x={12}
              y={geom.area.y + geom.area.height / 2}
              fontSize={12}
              fontFamily={fonts.medium}
              fill={plotColors.observed}
              textAnchor="middle"
              transform={`rotate(-90 12 ${geom.area.y + geom.area.height / 2})`}
            >
              {yLabel}
            </SvgText>
          </Svg>
        ) : null}
      </View>
      {legend.length ? (
        <View style={styles.legend} aria-hidden>
          {legend.map((l) => (
            <View key={l.key} style={styles.legendItem}>
              <View style={[styles.swatch, l.style]} />
              <Text variant="caption">{l.label}</Text>
            </View>
          ))}
        </View>
      ) : null}
    </View>
  );
}

const styles = StyleSheet.create({
  wrap: { gap: space.sm, width: '100%' },
  legend: { flexDirection: 'row', flexWrap: 'wrap', columnGap: space.lg, rowGap: space.xs },
  legendItem: { flexDirection: 'row', alignItems: 'center', gap: space.xs },
  swatch: { width: 22, height: 0 },
  swatchObserved: { borderTopWidth: 2, borderColor: plotColors.observed },
  swatchExpected: { borderTopWidth: 2, borderColor: plotColors.expected, borderStyle: 'dashed' },
  swatchBand1: { height: 10, backgroundColor: plotColors.band1 },
  swatchBand2: { height: 10, backgroundColor: plotColors.band2 },
  swatchTheory: { borderTopWidth: 2, borderColor: plotColors.theory, borderStyle: 'dotted', height: 8, backgroundColor: plotColors.theoryBand },
});
