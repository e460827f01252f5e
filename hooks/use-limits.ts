import { useQuery } from '@tanstack/react-query';
import { DEFAULT_UPLOAD_LIMIT_BYTES } from '@/shared/bytes';
import { api } from './api';

/** The server's upload limit (UPLOAD_LIMIT_BYTES); its default until the server has answered. */
export function useUploadLimit(): number {
  const q = useQuery({ queryKey: ['limits'], queryFn: () => api.limits(), staleTime: Infinity });
  return q.data?.uploadLimitBytes ?? DEFAULT_UPLOAD_LIMIT_BYTES;
}
