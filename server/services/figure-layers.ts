import type { FigureLayerData, OversizeLabel } from '../../shared/figure/types';
import type { FigureSpec } from '../../shared/schemas/figures';
import type { VersionMeta } from '../../shared/schemas/results';
import { HUE_COUNT } from '../../themes/figure/palette';
import * as q from '../../db/queries/figures';
import { audienceViewer, versionVisibleTo, type Audience, type VersionFacts } from '../../db/queries/visibility';
import type { Executor } from '../../db/client';
import { layerConversion, layerKindProblem } from '../../shared/figure/plan';
import type { LimitUnits } from '../../shared/units';
import { AppError, type ErrorDetail } from '../lib/errors';

/**
 * The layers of a figure as a reader may draw them: which pinned result versions an audience may
 * see (the one visibility rule, db/queries/visibility.ts), their data and metadata, the group's
 * hues for them, and the error for labels too large to draw. Used by the figures service (saving,
 * the composer's preview) and the figure renders service.
 */

export type { Audience };

/** The layer's pinned version may be drawn for `audience` of the figure's group. */
export function layerVisible<R extends VersionFacts>(row: R | undefined, figureGroupId: string, audience: Audience): row is R {
  return versionVisibleTo(audienceViewer(audience, figureGroupId), row);
}

// ---------------------------------------------------------------------------------------------
// Pinned result versions

export const pinKey = (resultId: string, version: number) => `${resultId}@${version}`;

/** The pinned versions of the spec's layers that the group may draw, by `pinKey`. */
export async function layerRows(db: Executor, groupId: string, spec: FigureSpec): Promise<Map<string, q.LayerVersionRow>> {
  const rows = await q.getLayerVersions(
    db,
    audienceViewer('group', groupId),
    spec.layers.map((l) => ({ resultId: l.resultId, version: l.version })),
  );
  return new Map(rows.map((r) => [pinKey(r.resultId, r.version), r]));
}

/**
 * 400 naming every layer that pins a result version the group may not use, or whose units
 * cannot go on the axes the first layer sets (μ with σ×B, parameters in unrelated units; energy
 * and cross-section units convert, see shared/units.ts).
 */
export async function assertLayersUsable(db: Executor, groupId: string, spec: FigureSpec) {
  const rows = await layerRows(db, groupId, spec);
  const details: ErrorDetail[] = [];
  let axis: (LimitUnits & { yUnit?: string }) | null = null;
  spec.layers.forEach((l, i) => {
    const row = rows.get(pinKey(l.resultId, l.version));
    if (!layerVisible(row, groupId, 'group')) {
      details.push({
        field: `spec.layers.${i}`,
        message: `version ${l.version} of result ${l.resultId} cannot be used by this group: a layer must pin one of the group's own results or a published version of a public result`,
      });
      return;
    }
    const kindProblem = layerKindProblem(spec.kind, !row.curve);
    if (kindProblem) {
      details.push({ field: `spec.layers.${i}`, message: `“${row.title}” (version ${l.version}) cannot go on this figure: ${kindProblem}` });
      return;
    }
    const units = { parameterUnit: row.parameterUnit, quantity: row.quantity as LimitUnits['quantity'], quantityUnit: row.quantityUnit, yUnit: row.plane?.yUnit };
    if (!axis) {
      axis = units;
      return;
    }
    const c = layerConversion(spec.kind, units, axis);
    if (!c.ok) details.push({ field: `spec.layers.${i}`, message: `“${row.title}” (version ${l.version}) cannot share this figure's axes: ${c.reason}` });
  });
  if (details.length) throw new AppError(400, 'validation_failed', `Layer ${details[0]!.field.split('.')[2]}: ${details[0]!.message}`, details);
}

export function metaOf(r: q.LayerVersionRow): VersionMeta {
  return {
    title: r.title,
    model: r.model,
    parameterName: r.parameterName,
    parameterUnit: r.parameterUnit,
    quantity: r.quantity,
    quantityUnit: r.quantityUnit as VersionMeta['quantityUnit'],
    sqrtS: r.sqrtS,
    luminosity: r.luminosity,
    cl: r.cl,
    method: r.method,
    reference: r.reference,
    notes: r.notes,
  };
}


// ---------------------------------------------------------------------------------------------
// Hues

export { HUE_COUNT };

/** Gives every result of the spec that has no hue in the group the next free one (in the caller's transaction). */
export async function assignHues(tx: Executor, groupId: string, spec: FigureSpec) {
  const hues = await q.listHues(tx, groupId);
  const used = new Set(hues.values());
  for (const l of spec.layers) {
    if (hues.has(l.resultId)) continue;
    let hue = 0;
    while (used.has(hue) && hue < HUE_COUNT) hue++;
    if (hue >= HUE_COUNT) hue = hues.size % HUE_COUNT;
    await q.insertHue(tx, groupId, l.resultId, hue);
    hues.set(l.resultId, hue);
    used.add(hue);
  }
}

/** The hues results would get if a figure with them were saved now (assignHues without writing). */
export function withPreviewHues(hues: Map<string, number>, resultIds: string[]): Map<string, number> {
  const out = new Map(hues);
  const used = new Set(hues.values());
  for (const id of resultIds) {
    if (out.has(id)) continue;
    let hue = 0;
    while (used.has(hue) && hue < HUE_COUNT) hue++;
    if (hue >= HUE_COUNT) hue = out.size % HUE_COUNT;
    out.set(id, hue);
    used.add(hue);
  }
  return out;
}

export const hueOf = (spec: FigureSpec, position: number, hues: Map<string, number>) => {
  const l = spec.layers[position]!;
  return l.hue ?? hues.get(l.resultId) ?? position % HUE_COUNT;
};


// ---------------------------------------------------------------------------------------------
// Layer data and label errors

export async function groupLayerData(db: Executor, groupId: string, layers: { resultId: string; version: number; hue: number | null }[]): Promise<FigureLayerData[]> {
  // One after the other: `db` may be a transaction's single connection.
  const rows = await q.getLayerVersions(db, audienceViewer('group', groupId), layers);
  const hues = await q.listHues(db, groupId);
  const byPin = new Map(rows.map((r) => [pinKey(r.resultId, r.version), r]));
  const visible = layers.map((l) => {
    const row = byPin.get(pinKey(l.resultId, l.version));
    return layerVisible(row, groupId, 'group') ? row : null;
  });
  const allHues = withPreviewHues(hues, visible.flatMap((r) => (r ? [r.resultId] : [])));
  return layers.map((l, i): FigureLayerData => {
    const row = visible[i];
    if (!row) return { available: false, resultId: l.resultId, version: l.version };
    const hue = l.hue ?? allHues.get(l.resultId) ?? i % HUE_COUNT;
    return availableLayer(row, hue);
  });
}

type LayerRow = Awaited<ReturnType<typeof q.getLayerVersions>>[number];

/**
 * A loaded layer version as the scene builder takes it: a curve, or a version over two parameters
 * with its plane and stored contours (only a plane figure draws it: the scene leaves a layer of
 * the other sort out with a note, `layerKindProblem`, and saving refuses it).
 */
export function availableLayer(row: LayerRow, hue: number): FigureLayerData {
  if (!row.curve) {
    if (!row.plane || !row.planeContours) return { available: false, resultId: row.resultId, version: row.version };
    return { available: true, resultId: row.resultId, version: row.version, title: row.title, meta: metaOf(row), curve: { x: [] }, theory: null, hue, sources: null, plane: { plane: row.plane, contours: row.planeContours } };
  }
  return { available: true, resultId: row.resultId, version: row.version, title: row.title, meta: metaOf(row), curve: row.curve, theory: row.theory ?? null, hue, sources: row.envelope ?? null };
}

/** The error for labels whose typeset box no text could have (a saved figure's field, or a stored one's at render time). */
export function oversizeError(status: 400 | 422, found: OversizeLabel[]): AppError {
  const details = found.map((o) => ({ field: o.field, message: o.message }));
  const first = found[0]!;
  return status === 400
    ? new AppError(400, 'validation_failed', `${first.field}: ${first.message}`, details)
    : new AppError(422, 'label_too_large', `This figure cannot be drawn: ${first.message} (${first.field}). Edit the figure and save it again.`, details);
}
