import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { CreateScanInput } from '@/shared/schemas/scans';
import { api } from './api';

const scanKeys = {
  list: (groupId: string) => ['groups', groupId, 'scans'] as const,
  one: (groupId: string, scanId: string) => ['groups', groupId, 'scans', scanId] as const,
  point: (groupId: string, scanId: string, index: number) => ['groups', groupId, 'scans', scanId, 'points', index] as const,
};

export function useScans(groupId: string | undefined) {
  return useQuery({
    queryKey: scanKeys.list(groupId ?? ''),
    queryFn: async () => (await api.scans.list(groupId!)).scans,
    enabled: !!groupId,
    refetchInterval: (q) => (q.state.data?.some((s) => s.state === 'queued' || s.state === 'running') ? 2000 : false),
  });
}

/** A scan, polled every second while it runs so progress and points fill in live. */
export function useScan(groupId: string, scanId: string) {
  return useQuery({
    queryKey: scanKeys.one(groupId, scanId),
    queryFn: () => api.scans.get(groupId, scanId),
    refetchInterval: (q) => (q.state.data && (q.state.data.state === 'queued' || q.state.data.state === 'running') ? 1000 : false),
  });
}

export function useScanPoint(groupId: string, scanId: string, index: number | null) {
  return useQuery({
    queryKey: scanKeys.point(groupId, scanId, index ?? -1),
    queryFn: () => api.scans.point(groupId, scanId, index!),
    enabled: index !== null,
  });
}

export function useStartScan(groupId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: CreateScanInput | FormData) => api.scans.start(groupId, input),
    onSuccess: () => qc.invalidateQueries({ queryKey: scanKeys.list(groupId) }),
  });
}

export function useCancelScan(groupId: string, scanId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: () => api.scans.cancel(groupId, scanId),
    onSuccess: (data) => {
      qc.setQueryData(scanKeys.one(groupId, scanId), data);
      void qc.invalidateQueries({ queryKey: scanKeys.list(groupId) });
    },
  });
}

/** Reruns one point of an ended pseudo-experiment scan with more pseudo-experiments (a new scan). */
export function useRerunPoint(groupId: string, scanId: string, index: number) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (toys: number) => api.scans.rerunPoint(groupId, scanId, index, { toys }),
    onSuccess: () => qc.invalidateQueries({ queryKey: scanKeys.list(groupId) }),
  });
}
