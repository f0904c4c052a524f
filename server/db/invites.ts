import type { Knex } from 'knex';
import type { Role } from '../roles.ts';

export interface InviteRow {
  id: string;
  workspace_id: string;
  email: string;
  role: Role;
  token_hash: string;
  invited_by: string | null;
  expires_at: Date;
  accepted_at: Date | null;
  accepted_by: string | null;
  revoked_at: Date | null;
  created_at: Date;
}

export async function insertInvite(
  db: Knex,
  invite: { workspaceId: string; email: string; role: Role; tokenHash: string; invitedBy: string; expiresAt: Date },
): Promise<InviteRow> {
  const [row] = await db<InviteRow>('invites')
    .insert({
      workspace_id: invite.workspaceId,
      email: invite.email,
      role: invite.role,
      token_hash: invite.tokenHash,
      invited_by: invite.invitedBy,
      expires_at: invite.expiresAt,
    })
    .returning('*');
  return row;
}

export async function findInviteByTokenHash(db: Knex, tokenHash: string): Promise<InviteRow | undefined> {
  return db<InviteRow>('invites').where({ token_hash: tokenHash }).first();
}

export async function findInvite(db: Knex, workspaceId: string, id: string): Promise<InviteRow | undefined> {
  return db<InviteRow>('invites').where({ workspace_id: workspaceId, id }).first();
}

export async function listPendingInvites(db: Knex, workspaceId: string, now: Date): Promise<InviteRow[]> {
  return db<InviteRow>('invites')
    .where({ workspace_id: workspaceId })
    .whereNull('accepted_at')
    .whereNull('revoked_at')
    .where('expires_at', '>', now)
    .orderBy('created_at', 'desc');
}

/** Marks the invite used; returns false when another request used or revoked it first. */
export async function markInviteAccepted(db: Knex, id: string, userId: string, now: Date): Promise<boolean> {
  const n = await db('invites')
    .where({ id })
    .whereNull('accepted_at')
    .whereNull('revoked_at')
    .update({ accepted_at: now, accepted_by: userId });
  return n === 1;
}

export async function revokeInvite(db: Knex, id: string, now: Date): Promise<void> {
  await db('invites').where({ id }).whereNull('accepted_at').update({ revoked_at: now });
}
