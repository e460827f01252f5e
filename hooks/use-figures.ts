import { keepPreviousData, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useEffect, useMemo, useRef, useState } from 'react';
import { labelKey, type FigureLayerData, type Glyphs, type LabelRequest, type TypesetLabel } from '@/shared/figure/types';
import type { FigureSpec, FigureSpecInput, LayerSpec } from '@/shared/schemas/figures';
import type { PublicFigureListQuery } from '@/shared/schemas/figure-views';
import { api } from './api';

const figureKeys = {
  list: (groupId: string) => ['groups', groupId, 'figures'] as const,
  one: (groupId: string, figureId: string) => ['groups', groupId, 'figures', figureId] as const,
  style: (groupId: string) => ['groups', groupId, 'style'] as const,
  layerData: (groupId: string, pins: string) => ['groups', groupId, 'figure-layer-data', pins] as const,
};

export function useFigures(groupId: string | undefined) {
  return useQuery({ queryKey: figureKeys.list(groupId ?? ''), queryFn: async () => (await api.figures.list(groupId!)).figures, enabled: !!groupId });
}

export function useFigure(groupId: string, figureId: string) {
  return useQuery({ queryKey: figureKeys.one(groupId, figureId), queryFn: () => api.figures.get(groupId, figureId) });
}

export function useHouseStyle(groupId: string) {
  return useQuery({ queryKey: figureKeys.style(groupId), queryFn: () => api.figures.style(groupId) });
}

/** The pinned result versions' data as the group may draw them (hidden ones come back unavailable). */
export function useLayerData(groupId: string, layers: LayerSpec[]) {
  const pins = layers.map((l) => `${l.resultId}@${l.version}:${l.hue ?? ''}`).join(',');
  return useQuery<FigureLayerData[]>({
    queryKey: figureKeys.layerData(groupId, pins),
    queryFn: async () => (await api.figures.layerData(groupId, { layers: layers.map((l) => ({ resultId: l.resultId, version: l.version, hue: l.hue })) })).layers,
    placeholderData: keepPreviousData,
  });
}

/**
 * Typeset labels for the preview: asks the server only for labels it has not seen, keeps every
 * answer for the session, and says when all requested labels are in.
 */
export function useGlyphs(requests: LabelRequest[]): { glyphs: Glyphs; ready: boolean; error: unknown } {
  const cache = useRef<Glyphs>(new Map());
  const [version, setVersion] = useState(0);
  const [error, setError] = useState<unknown>(null);
  const missing = useMemo(() => {
    const seen = new Set<string>();
    return requests.filter((r) => {
      const k = labelKey(r);
      if (cache.current.has(k) || seen.has(k)) return false;
      seen.add(k);
      return true;
    });
    // `version` makes the list recompute after an answer arrives (the cache is a ref).
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, [requests, version]);
  useEffect(() => {
    if (missing.length === 0) return;
    let cancelled = false;
    void (async () => {
      try {
        for (let i = 0; i < missing.length; i += 500) {
          const res = await api.figures.typeset({ labels: missing.slice(i, i + 500) });
          for (const [k, g] of Object.entries(res.glyphs)) cache.current.set(k, g as TypesetLabel);
        }
        if (!cancelled) setVersion((v) => v + 1);
      } catch (e) {
        if (!cancelled) setError(e);
      }
    })();
    return () => {
      cancelled = true;
    };
  }, [missing]);
  return { glyphs: cache.current, ready: missing.length === 0, error };
}

export function useCreateFigure(groupId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: { spec: FigureSpecInput; public?: boolean }) => api.figures.create(groupId, input),
    onSuccess: () => qc.invalidateQueries({ queryKey: figureKeys.list(groupId) }),
  });
}

export function useSaveFigure(groupId: string, figureId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: { spec: FigureSpec; note?: string }) => api.figures.save(groupId, figureId, input),
    onSuccess: (data) => {
      qc.setQueryData(figureKeys.one(groupId, figureId), data);
      void qc.invalidateQueries({ queryKey: figureKeys.list(groupId) });
    },
  });
}

export function useFigureActions(groupId: string, figureId: string) {
  const qc = useQueryClient();
  const refresh = () => qc.invalidateQueries({ queryKey: figureKeys.list(groupId) });
  return {
    duplicate: useMutation({ mutationFn: () => api.figures.duplicate(groupId, figureId), onSuccess: refresh }),
    outreach: useMutation({ mutationFn: () => api.figures.outreach(groupId, figureId, { size: 'web' }), onSuccess: refresh }),
    visibility: useMutation({
      mutationFn: (isPublic: boolean) => api.figures.setVisibility(groupId, figureId, isPublic),
      onSuccess: (data) => {
        qc.setQueryData(figureKeys.one(groupId, figureId), data);
        void refresh();
      },
    }),
    remove: useMutation({ mutationFn: () => api.figures.remove(groupId, figureId), onSuccess: refresh }),
  };
}

/** Public figures of every group (anyone, signed in or not). */
export function usePublicFigures(query: PublicFigureListQuery) {
  return useQuery({ queryKey: ['public-figures', query] as const, queryFn: () => api.publicFigures.list(query), placeholderData: keepPreviousData });
}

/** A public figure's own page (`/f/<id>`), for anyone; 404 when the figure is not public. */
export function usePublicFigure(figureId: string) {
  return useQuery({ queryKey: ['public-figures', 'one', figureId] as const, queryFn: () => api.publicFigures.get(figureId), enabled: !!figureId });
}
