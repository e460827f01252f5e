import { useRef, useState } from 'react';
import { Platform, View, type LayoutChangeEvent } from 'react-native';
import Svg, { ClipPath, Defs, G, Path, Rect } from 'react-native-svg';
import { annotationPlace } from '@/shared/figure/place';
import { labelKey, type Glyphs, type Primitive, type Scene } from '@/shared/figure/types';

/** Where a typeset label starts, from its anchor point and width. */
function labelOrigin(p: Extract<Primitive, { kind: 'text' }>, width: number): number {
  return p.anchor === 'start' ? 0 : p.anchor === 'middle' ? -width / 2 : -width;
}

/**
 * Draws a figure scene with react-native-svg: the same primitives and the same typeset label
 * outlines as the server's SVG, PDF and PNG, scaled to the width available. Labels are paths, so
 * no user text is ever interpreted as markup.
 */
/** Placing an annotation with the pointer: each press or drag moves it there; `onEnd` when the button is let go. */
export type Placing = { index: number; onMove: (place: { x: number; y: number }) => void; onEnd: () => void };

export function SceneView({ scene, glyphs, accessibilityLabel, maxWidth, placing }: { scene: Scene; glyphs: Glyphs; accessibilityLabel: string; maxWidth?: number; placing?: Placing | null }) {
  const [width, setWidth] = useState(0);
  const box = useRef<View>(null);
  const down = useRef(false);
  const onLayout = (e: LayoutChangeEvent) => {
    const w = Math.floor(e.nativeEvent.layout.width);
    if (w !== width) setWidth(w);
  };
  const shown = Math.min(width, maxWidth ?? Number.POSITIVE_INFINITY);
  const height = shown > 0 ? (shown * scene.heightPt) / scene.widthPt : 0;
  const clipId = 'plot-clip';
  // Pointer placement (web): the page point under the pointer, in the scene's points.
  const at = (e: { nativeEvent: { clientX?: number; clientY?: number } }) => {
    const node = box.current as unknown as { getBoundingClientRect?: () => { left: number; top: number } } | null;
    const r = node?.getBoundingClientRect?.();
    if (!r || shown <= 0 || e.nativeEvent.clientX === undefined || e.nativeEvent.clientY === undefined) return null;
    const k = scene.widthPt / shown;
    return annotationPlace(scene.plot, (e.nativeEvent.clientX - r.left) * k, (e.nativeEvent.clientY - r.top) * k);
  };
  const pointer =
    placing && Platform.OS === 'web'
      ? {
          onPointerDown: (e: { nativeEvent: { clientX?: number; clientY?: number } }) => {
            down.current = true;
            const p = at(e);
            if (p) placing.onMove(p);
            // Let go anywhere (also off the figure, or after the preview was redrawn) ends the placing.
            if (typeof window !== 'undefined') {
              window.addEventListener(
                'pointerup',
                () => {
                  if (!down.current) return;
                  down.current = false;
                  placing.onEnd();
                },
                { once: true },
              );
            }
          },
          onPointerMove: (e: { nativeEvent: { clientX?: number; clientY?: number } }) => {
            if (!down.current) return;
            const p = at(e);
            if (p) placing.onMove(p);
          },
          onPointerUp: () => {
            if (!down.current) return;
            down.current = false;
            placing.onEnd();
          },
        }
      : {};
  return (
    <View ref={box} onLayout={onLayout} role="img" aria-label={accessibilityLabel} style={[{ width: '100%' }, placing ? ({ cursor: 'crosshair', touchAction: 'none' } as object) : null]} {...pointer}>
      {shown > 0 ? (
        <Svg width={shown} height={height} viewBox={`0 0 ${scene.widthPt} ${scene.heightPt}`}>
          <Defs>
            <ClipPath id={clipId}>
              <Rect x={scene.plot.x} y={scene.plot.y} width={scene.plot.width} height={scene.plot.height} />
            </ClipPath>
          </Defs>
          <Rect x={0} y={0} width={scene.widthPt} height={scene.heightPt} fill={scene.background} />
          {scene.items.map((p, i) => {
            if (p.kind === 'rect') {
              return (
                <Rect
                  key={i}
                  x={p.x}
                  y={p.y}
                  width={p.width}
                  height={p.height}
                  fill={p.fill ?? 'none'}
                  stroke={p.stroke ?? 'none'}
                  strokeWidth={p.strokeWidth}
                  opacity={p.opacity ?? 1}
                />
              );
            }
            if (p.kind === 'path') {
              return (
                <Path
                  key={i}
                  d={p.d}
                  fill={p.fill ?? 'none'}
                  fillRule={p.fillRule}
                  stroke={p.stroke ?? 'none'}
                  strokeWidth={p.strokeWidth}
                  strokeDasharray={p.dash ?? undefined}
                  opacity={p.opacity ?? 1}
                  clipPath={p.clip ? `url(#${clipId})` : undefined}
                />
              );
            }
            const g = glyphs.get(labelKey({ label: p.label, size: p.size, font: p.font }));
            if (!g) return null;
            const dx = labelOrigin(p, g.width);
            return (
              <G key={i} transform={`translate(${p.x} ${p.y}) rotate(${p.rotate}) translate(${dx} 0)`}>
                {g.paths.map((d, k) => (
                  <Path key={k} d={d} fill={p.color} />
                ))}
              </G>
            );
          })}
        </Svg>
      ) : (
        <View style={{ height: 200 }} />
      )}
    </View>
  );
}
