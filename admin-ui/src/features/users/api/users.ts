import { keepPreviousData, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { CreateUser, Page, UpdateUser, User } from '@ebbgate/shared';
import { api, type Query } from '@/lib/api-client';

export const userKeys = {
  all: ['users'] as const,
  list: (q: Query) => ['users', 'list', q] as const,
};

export function useUsers(q: Query) {
  return useQuery({ queryKey: userKeys.list(q), queryFn: ({ signal }) => api.get<Page<User>>('/users', q, signal), placeholderData: keepPreviousData });
}

export function useCreateUser() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: CreateUser) => api.post<User>('/users', body),
    onSuccess: () => qc.invalidateQueries({ queryKey: userKeys.all }),
  });
}

export function useUpdateUser() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ id, body }: { id: string; body: UpdateUser }) => api.patch<User>(`/users/${encodeURIComponent(id)}`, body),
    onSuccess: () => qc.invalidateQueries({ queryKey: userKeys.all }),
  });
}

export function useResetPassword() {
  return useMutation({
    mutationFn: ({ id, password }: { id: string; password: string }) => api.post<void>(`/users/${encodeURIComponent(id)}/password`, { password }),
  });
}
