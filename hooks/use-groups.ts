import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { GroupRole } from '@/shared/access';
import type { CreateGroupInput, InviteInput } from '@/shared/schemas/groups';
import { api, keys } from './api';

export function useCreateGroup() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: CreateGroupInput) => api.groups.create(input),
    onSuccess: () => qc.invalidateQueries({ queryKey: keys.me }),
  });
}

export function useMembers(groupId: string | undefined) {
  return useQuery({
    queryKey: keys.members(groupId ?? ''),
    queryFn: async () => (await api.members.list(groupId!)).members,
    enabled: !!groupId,
  });
}

export function useChangeRole(groupId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (v: { userId: string; role: GroupRole }) => api.members.changeRole(groupId, v.userId, { role: v.role }),
    onSuccess: (data) => {
      qc.setQueryData(keys.members(groupId), data.members);
      void qc.invalidateQueries({ queryKey: keys.me });
    },
  });
}

export function useRemoveMember(groupId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (userId: string) => api.members.remove(groupId, userId),
    onSuccess: () => {
      void qc.invalidateQueries({ queryKey: keys.members(groupId) });
      void qc.invalidateQueries({ queryKey: keys.me });
    },
  });
}

export function useInvitations(groupId: string | undefined, enabled: boolean) {
  return useQuery({
    queryKey: keys.invitations(groupId ?? ''),
    queryFn: async () => (await api.invitations.list(groupId!)).invitations,
    enabled: !!groupId && enabled,
  });
}

export function useInvite(groupId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: InviteInput) => api.invitations.create(groupId, input),
    onSuccess: () => qc.invalidateQueries({ queryKey: keys.invitations(groupId) }),
  });
}

export function useRevokeInvitation(groupId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (invitationId: string) => api.invitations.revoke(groupId, invitationId),
    onSuccess: () => qc.invalidateQueries({ queryKey: keys.invitations(groupId) }),
  });
}

export function useInvitationPreview(token: string) {
  return useQuery({ queryKey: keys.invitation(token), queryFn: () => api.invitations.preview(token) });
}

export function useAcceptInvitation(token: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: () => api.invitations.accept(token),
    onSuccess: () => {
      void qc.invalidateQueries({ queryKey: keys.me });
      void qc.invalidateQueries({ queryKey: keys.invitation(token) });
    },
  });
}

export function useInbox(enabled: boolean) {
  return useQuery({
    queryKey: keys.inbox,
    queryFn: async () => (await api.dev.inbox()).messages,
    enabled,
    refetchInterval: 5000,
  });
}
