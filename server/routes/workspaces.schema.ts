import { z } from 'zod';
import { roleSchema, type Role } from '../roles.ts';

export interface WorkspaceSummary {
  id: string;
  name: string;
  slug: string;
  role: Role;
}

export interface Member {
  userId: string;
  email: string;
  name: string;
  role: Role;
  joinedAt: string;
}

export interface PendingInvite {
  id: string;
  email: string;
  role: Role;
  expiresAt: string;
  createdAt: string;
}

export interface CapturedMailView {
  id: string;
  receivedAt: string;
  from: string;
  to: string[];
  subject: string;
  text: string;
}

export const changeRoleSchema = z.object({ role: roleSchema });
export type ChangeRoleBody = z.infer<typeof changeRoleSchema>;

export const createInviteSchema = z.object({
  email: z.email().max(254),
  role: roleSchema,
});
export type CreateInviteBody = z.infer<typeof createInviteSchema>;

export const acceptInviteSchema = z.object({
  name: z.string().trim().min(1).max(100).optional(),
  password: z.string().min(10, 'use at least 10 characters').max(200).optional(),
});
export type AcceptInviteBody = z.infer<typeof acceptInviteSchema>;

export interface InvitePreviewResponse {
  workspaceName: string;
  email: string;
  role: Role;
  invitedBy: string | null;
  accountExists: boolean;
  expiresAt: string;
}
