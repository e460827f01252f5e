/**
 * The figure scene: what a figure spec and its data become before any output format. Pure data,
 * drawn by the app's preview (react-native-svg) and by the server's renderers (SVG, PDF, PNG), so
 * preview and export are the same figure.
 *
 * Units are points (1/72 inch); the origin is the top-left corner and y grows downwards.
 */
import type { EnvelopeSources } from '../schemas/combine';
import type { Plane, PlaneContours } from '../schemas/plane';
import type { Curve, Theory, VersionMeta } from '../schemas/results';

import type { FontRole } from '../../themes/figure/types';

export type { FontRole };

/** Size of a typeset label: width, and extent above (ascent) and below (descent) the baseline. */
export type TextMetrics = { width: number; ascent: number; descent: number };

/**
 * Measures a label (text with `$…$` TeX math) at a size in a font. The server measures with the
 * real typesetter; the app uses the server's answers (see `Glyphs`), so both lay out identically.
 */
export type Measure = (label: string, sizePt: number, font: FontRole) => TextMetrics;

/** One label to typeset: the scene builder lists them so they can be typeset in one batch. */
export type LabelRequest = { label: string; size: number; font: FontRole };
export const labelKey = (r: LabelRequest) => `${r.font}|${r.size.toFixed(3)}|${r.label}`;

/** A typeset label: its metrics and outline paths (points, origin at the left end of the baseline). */
export type TypesetLabel = TextMetrics & { paths: string[]; error?: string };
/** Typeset labels by `labelKey`. */
export type Glyphs = Map<string, TypesetLabel>;

export type Rect = { x: number; y: number; width: number; height: number };

export type Primitive =
  | { kind: 'rect'; x: number; y: number; width: number; height: number; fill: string | null; stroke: string | null; strokeWidth: number; opacity?: number; role: string }
  | {
      kind: 'path';
      d: string;
      fill: string | null;
      stroke: string | null;
      strokeWidth: number;
      /** Dash pattern in points, or null for a solid line. */
      dash: number[] | null;
      opacity?: number;
      /** How a fill treats overlapping rings: 'evenodd' fills what is covered an odd number of times (default: non-zero). */
      fillRule?: 'evenodd';
      /** Clipped to the plot area. */
      clip: boolean;
      /** What it is ("band2", "band1", "expected", "observed", "theory", "theory-band", "excluded" (the region above the observed limit where it excludes the theory), "grid", "axis", "tick", "crossing", "legend-key"). */
      role: string;
      /** The layer it belongs to, if any. */
      layer?: number;
    }
  | {
      kind: 'text';
      /** Anchor point: x per `anchor`, y on the baseline. */
      x: number;
      y: number;
      label: string;
      size: number;
      font: FontRole;
      anchor: 'start' | 'middle' | 'end';
      color: string;
      /** Degrees, counter-clockwise (−90 for a vertical axis title reads bottom to top). */
      rotate: 0 | -90;
      role: 'tick' | 'axis-title' | 'legend' | 'annotation' | 'energy' | 'cl' | 'explain' | 'note' | 'bar-label' | 'bar-note' | 'bar-status' | 'group';
    };

export type Scene = {
  widthPt: number;
  heightPt: number;
  background: string;
  /** The plot area (inside the axes). */
  plot: Rect;
  /** Back to front. */
  items: Primitive[];
  /** Where the legend went ('none' when hidden). */
  legendCorner: 'top-left' | 'top-right' | 'bottom-left' | 'bottom-right' | 'none';
  /** Plain-language notes for whoever renders or views it (e.g. a layer that could not be shown). */
  notes: string[];
  /**
   * Labels whose typeset box is larger than the page (see `buildScene`): the layout was kept on
   * the page regardless, but the server refuses to save or render such a figure.
   */
  oversizeLabels: OversizeLabel[];
};

/**
 * A label larger than the page: `field` is the part of the spec that decides its text (e.g.
 * `spec.y.label`, `spec.layers.0.label`), `message` says how large it is and what to do.
 */
export type OversizeLabel = { field: string; label: string; message: string };

/**
 * A two-parameter layer's points and the contour lines stored with its version (the registry
 * derives them once, when the version is written; figures never recompute them).
 */
export type PlaneLayerData = { plane: Plane; contours: PlaneContours };

/**
 * One layer's data as loaded for a viewer. `available: false` means the viewer may not see that
 * result version (or it is gone): the scene leaves it out and says so in `notes`, never leaking it.
 */
export type FigureLayerData =
  | {
      available: true;
      resultId: string;
      version: number;
      title: string;
      meta: VersionMeta;
      curve: Curve;
      theory: Theory | null;
      hue: number;
      /** For a best-expected envelope: its inputs' titles and which one it takes where. */
      sources?: EnvelopeSources | null;
      /**
       * A version over two parameters: its plane and stored contours (its `curve` is then empty,
       * `{ x: [] }`, and `theory` null). Only a figure of kind `plane` draws it, and draws nothing else.
       */
      plane?: PlaneLayerData | null;
    }
  | { available: false; resultId: string; version: number };
