/**
 * Figures API: request payloads beyond the spec (shared/schemas/figures.ts) and the read models
 * the server answers with, shared by the server (validation) and the app (types).
 */
import { z } from 'zod';
import { HUE_COUNT } from '../../themes/figure/palette';
import type { FigureLayerData, TypesetLabel } from '../figure/types';
import { FIGURE_LIMITS, FIGURE_THEMES, figureParams, houseStyleSchema, layerSchema, storableText, type FigureSpec, type FigureTheme, type HouseStyle } from './figures';
import type { ResultState } from './results';
import { pageParams, uuidParam, versionParam } from './common';

// ---------------------------------------------------------------------------------------------
// Requests

/** One label of the typeset route: the same limits as labels in a spec, sizes a figure can use. */
export const TYPESET_LIMITS = { maxLabels: 500, maxChars: 200, maxTotalChars: 20_000, minSize: 3, maxSize: 72 } as const;

export const typesetRequestSchema = z.object({
  labels: z
    .array(
      z.object({
        label: z.string().max(TYPESET_LIMITS.maxChars, `must be at most ${TYPESET_LIMITS.maxChars} characters`),
        size: z
          .number({ error: 'must be a number (points)' })
          .min(TYPESET_LIMITS.minSize, `must be at least ${TYPESET_LIMITS.minSize} pt`)
          .max(TYPESET_LIMITS.maxSize, `must be at most ${TYPESET_LIMITS.maxSize} pt`),
        font: z.enum(['sans', 'serif'], { error: 'must be "sans" or "serif"' }),
      }),
    )
    .max(TYPESET_LIMITS.maxLabels, `at most ${TYPESET_LIMITS.maxLabels} labels per request`)
    .refine((ls) => ls.reduce((n, l) => n + l.label.length, 0) <= TYPESET_LIMITS.maxTotalChars, `at most ${TYPESET_LIMITS.maxTotalChars} characters of labels per request`),
});
export type TypesetRequest = z.input<typeof typesetRequestSchema>;
/** Typeset labels by `labelKey` (shared/figure/types.ts). */
export type TypesetResponse = { glyphs: Record<string, TypesetLabel> };

/**
 * The composer's preview data: the layers of a spec being edited (saved or not), each loaded as
 * the group may draw it, with the hue it would get.
 */
export const layerDataRequestSchema = z.object({
  layers: z.array(layerSchema.pick({ resultId: true, version: true, hue: true })).max(FIGURE_LIMITS.maxBars, `at most ${FIGURE_LIMITS.maxBars} layers`),
});
export type LayerDataRequest = z.input<typeof layerDataRequestSchema>;
export type LayerDataResponse = { layers: FigureLayerData[] };

export const figureVisibilitySchema = z.object({ public: z.boolean({ error: 'must be true or false' }) });

export const duplicateFigureSchema = z.object({
  /** Title of the copy; left out: "Copy of …". */
  title: storableText(z.string().trim().min(1, 'must not be empty').max(200, 'must be at most 200 characters')).optional(),
});

/** The plain-language version of a figure for the public: its size (a slide or a web page). */
export const outreachFigureSchema = duplicateFigureSchema.extend({
  size: z.enum(['web', 'slide'], { error: 'must be "web" or "slide"' }).default('web'),
});

export const figureVersionParams = figureParams.extend({ version: versionParam });
export const figureIdParams = z.object({ figureId: uuidParam });

export const hueParams = z.object({ groupId: uuidParam, resultId: uuidParam });
export const hueSchema = z.object({ hue: z.number({ error: 'must be a number' }).int('must be a whole number').min(0, `must be 0 to ${HUE_COUNT - 1}`).max(HUE_COUNT - 1, `must be 0 to ${HUE_COUNT - 1}`) });

export const houseStyleBodySchema = z.object({ style: houseStyleSchema });

export const publicFigureListQuery = z.object({
  q: storableText(z.string().trim().max(200)).optional(),
  theme: z.enum(FIGURE_THEMES).optional(),
  ...pageParams,
});
export type PublicFigureListQuery = Partial<z.output<typeof publicFigureListQuery>>;

// ---------------------------------------------------------------------------------------------
// Answers

export type FigureSummary = {
  id: string;
  groupId: string;
  title: string;
  theme: FigureTheme;
  /** The latest version. */
  version: number;
  isPublic: boolean;
  derivedFrom: string | null;
  updatedAt: string;
};

export type FigureVersionSummary = { version: number; note: string; createdBy: string | null; createdAt: string };

/**
 * A layer of a figure version as the group sees it: the pinned result version, whether the group
 * may still draw it, and whether a newer published version exists ("update to latest").
 */
export type FigureLayerInfo = {
  position: number;
  resultId: string;
  version: number;
  /** The pinned version's title and state; null when the group may no longer see it. */
  title: string | null;
  state: ResultState | null;
  available: boolean;
  /** Whether the public sees this layer when the figure is public (a published, public result). */
  publiclyVisible: boolean;
  /** The newest published version the group may use, or null when there is none. */
  latestPublished: number | null;
  newerPublished: boolean;
  /** The hue the layer is drawn with (its override, else the group's hue for the result). */
  hue: number;
};

export type FigureVersionDetail = {
  figureId: string;
  version: number;
  spec: FigureSpec;
  note: string;
  createdBy: string | null;
  createdAt: string;
  layers: FigureLayerInfo[];
};

export type FigureDetail = FigureSummary & {
  /** The latest version's spec, note and layers. */
  latest: FigureVersionDetail;
  versions: FigureVersionSummary[];
};

export type PublicFigureSummary = { id: string; title: string; theme: FigureTheme; groupName: string; version: number; updatedAt: string };
/** A pinned result version as the public page of a figure lists it (only versions the public may see). */
export type PublicFigurePin = { slug: string; version: number; title: string; state: import('./results').ResultState; permalink: string };
/** `GET /api/public/figures/:figureId`: a public figure's own page. */
export type PublicFigureDetail = {
  id: string;
  title: string;
  theme: FigureTheme;
  groupName: string;
  version: number;
  /** The latest version's latest change (its save time). */
  savedAt: string;
  /** The permanent address of the figure's page. */
  permalink: string;
  /** The caption draft (the caption.txt export, as the public reads it). */
  caption: string;
  pins: PublicFigurePin[];
  /** How many layers the public may not see (drawn without them). */
  hiddenLayers: number;
};
export type PublicFigurePage = { items: PublicFigureSummary[]; total: number; page: number; pageSize: number };

export type GroupStyleView = { style: HouseStyle; updatedAt: string | null };
export type ResultHueView = { resultId: string; hue: number };
