import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { EdgeCredential, EdgeCredentialScope, NewEdgeCredential } from '@ebbgate/shared';
import { api } from '@/lib/api-client';

/** Credentials the device edge accepts, per monitor or per profile (GET/POST/DELETE …/edge-credentials). */
export const edgeCredentialKeys = {
  all: ['edge-credentials'] as const,
  list: (scope: EdgeCredentialScope, id: string) => ['edge-credentials', scope, id] as const,
};

const enc = encodeURIComponent;
const base = (scope: EdgeCredentialScope, id: string) => `/${scope === 'monitor' ? 'monitors' : 'profiles'}/${enc(id)}/edge-credentials`;

export function useEdgeCredentials(scope: EdgeCredentialScope, id: string) {
  return useQuery({ queryKey: edgeCredentialKeys.list(scope, id), queryFn: ({ signal }) => api.get<EdgeCredential[]>(base(scope, id), undefined, signal) });
}
export function useAddEdgeCredential(scope: EdgeCredentialScope, id: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: NewEdgeCredential) => api.post<EdgeCredential>(base(scope, id), body),
    onSuccess: () => qc.invalidateQueries({ queryKey: edgeCredentialKeys.list(scope, id) }),
  });
}
export function useRemoveEdgeCredential(scope: EdgeCredentialScope, id: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (credentialId: string) => api.delete<void>(`${base(scope, id)}/${enc(credentialId)}`),
    onSuccess: () => qc.invalidateQueries({ queryKey: edgeCredentialKeys.list(scope, id) }),
  });
}
