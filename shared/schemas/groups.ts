import { z } from 'zod';
import { GROUP_ROLES } from '../access';
import { email, shortText, userIdParam, uuidParam } from './common';

export const groupRoleSchema = z.enum(GROUP_ROLES, { error: `must be one of ${GROUP_ROLES.join(', ')}` });

export const createGroupSchema = z.object({
  name: shortText(80),
  description: z.string().trim().max(500, 'must be at most 500 characters').default(''),
});
export type CreateGroupInput = z.input<typeof createGroupSchema>;

export const updateGroupSchema = z
  .object({
    name: shortText(80).optional(),
    description: z.string().trim().max(500, 'must be at most 500 characters').optional(),
  })
  .refine((v) => v.name !== undefined || v.description !== undefined, 'give a name or a description to change');
export type UpdateGroupInput = z.input<typeof updateGroupSchema>;

export const groupParams = z.object({ groupId: uuidParam });
export const memberParams = z.object({ groupId: uuidParam, userId: userIdParam });
export const invitationParams = z.object({ groupId: uuidParam, invitationId: uuidParam });
export const invitationTokenParams = z.object({ token: z.string().regex(/^[A-Za-z0-9_-]{20,100}$/, 'must be an invitation token') });

export const changeRoleSchema = z.object({ role: groupRoleSchema });
export type ChangeRoleInput = z.infer<typeof changeRoleSchema>;

export const inviteSchema = z.object({ email, role: groupRoleSchema });
export type InviteInput = z.infer<typeof inviteSchema>;

export const groupSchema = z.object({
  id: z.string(),
  name: z.string(),
  slug: z.string(),
  description: z.string(),
  role: groupRoleSchema,
  memberCount: z.number(),
  createdAt: z.string(),
  /** Bytes the group's stored results use (uploaded files and normalized data). */
  storageBytes: z.number(),
});
export type Group = z.infer<typeof groupSchema>;

export const memberSchema = z.object({
  userId: z.string(),
  name: z.string(),
  email: z.string(),
  role: groupRoleSchema,
  joinedAt: z.string(),
});
export type Member = z.infer<typeof memberSchema>;

export const invitationSchema = z.object({
  id: z.string(),
  email: z.string(),
  role: groupRoleSchema,
  state: z.enum(['pending', 'accepted', 'revoked']),
  invitedBy: z.string().nullable(),
  expiresAt: z.string(),
  createdAt: z.string(),
});
export type Invitation = z.infer<typeof invitationSchema>;

/** What an invitee sees when opening the link (no group data beyond the name). */
export const invitationPreviewSchema = z.object({
  groupName: z.string(),
  role: groupRoleSchema,
  email: z.string(),
  invitedBy: z.string().nullable(),
  state: z.enum(['pending', 'accepted', 'revoked', 'expired']),
});
export type InvitationPreview = z.infer<typeof invitationPreviewSchema>;

export const meSchema = z.object({
  /** `emailVerified`: the address was confirmed through the mailed link (needed to accept invitations). */
  user: z.object({ id: z.string(), name: z.string(), email: z.string(), emailVerified: z.boolean() }),
  groups: z.array(groupSchema),
  devTools: z.boolean(),
});
export type Me = z.infer<typeof meSchema>;

export const mailMessageSchema = z.object({
  id: z.string(),
  to: z.string(),
  subject: z.string(),
  text: z.string(),
  html: z.string(),
  kind: z.string(),
  createdAt: z.string(),
});
export type MailMessage = z.infer<typeof mailMessageSchema>;
