import { useQuery } from '@tanstack/react-query';
import { MAX_UPLOAD_BYTES } from '@/components/upload/upload-model';
import { api } from './api';

/** The server's upload limit (UPLOAD_LIMIT_BYTES); its default until the server has answered. */
export function useUploadLimit(): number {
  const q = useQuery({ queryKey: ['limits'], queryFn: () => api.limits(), staleTime: Infinity });
  return q.data?.uploadLimitBytes ?? MAX_UPLOAD_BYTES;
}
