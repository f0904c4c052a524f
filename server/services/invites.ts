import { createHash, randomBytes } from 'node:crypto';
import { AppError, notFound } from '../errors.ts';
import type { ServiceContext } from '../context.ts';
import { findInvite, findInviteByTokenHash, insertInvite, listPendingInvites, markInviteAccepted, revokeInvite, type InviteRow } from '../db/invites.ts';
import { findMembership, listMembers } from '../db/memberships.ts';
import { findUserByEmail, findUserById, insertUser, toPublicUser, type PublicUser } from '../db/users.ts';
import { findWorkspaceById } from '../db/workspaces.ts';
import { hashPassword } from '../passwords.ts';
import type { Role } from '../roles.ts';

export const INVITE_DAYS = 7;

export const hashToken = (token: string) => createHash('sha256').update(token).digest('hex');

export interface InviteView {
  id: string;
  email: string;
  role: Role;
  expiresAt: string;
  createdAt: string;
}

const toView = (row: InviteRow): InviteView => ({
  id: row.id,
  email: row.email,
  role: row.role,
  expiresAt: row.expires_at.toISOString(),
  createdAt: row.created_at.toISOString(),
});

export async function listInvites(ctx: ServiceContext, workspaceId: string): Promise<InviteView[]> {
  return (await listPendingInvites(ctx.db, workspaceId, ctx.clock())).map(toView);
}

/** Creates a one-time invitation and e-mails its accept link. */
export async function inviteByEmail(
  ctx: ServiceContext,
  input: { workspaceId: string; inviterId: string; email: string; role: Role },
): Promise<InviteView> {
  const workspace = await findWorkspaceById(ctx.db, input.workspaceId);
  const inviter = await findUserById(ctx.db, input.inviterId);
  if (!workspace || !inviter) throw notFound('That workspace');
  const members = await listMembers(ctx.db, input.workspaceId);
  if (members.some((m) => m.email.toLowerCase() === input.email.toLowerCase())) {
    throw new AppError(409, 'ALREADY_MEMBER', `${input.email} is already a member of this workspace.`);
  }
  const token = randomBytes(32).toString('base64url');
  const expiresAt = new Date(ctx.clock().getTime() + INVITE_DAYS * 24 * 3600 * 1000);
  const row = await insertInvite(ctx.db, { ...input, tokenHash: hashToken(token), invitedBy: inviter.id, expiresAt });
  const link = `${ctx.config.publicUrl.replace(/\/$/, '')}/invite/${token}`;
  await ctx.mailer.send({
    to: input.email,
    workspaceId: workspace.id,
    subject: `${inviter.name} invited you to ${workspace.name} on Bleedwright`,
    text: [
      `${inviter.name} invited you to join the workspace "${workspace.name}" on Bleedwright as ${input.role}.`,
      '',
      `Accept the invitation (the link works once, for ${INVITE_DAYS} days):`,
      link,
      '',
      'If you did not expect this, ignore this message.',
    ].join('\n'),
  });
  return toView(row);
}

export async function cancelInvite(ctx: ServiceContext, workspaceId: string, inviteId: string): Promise<void> {
  const invite = await findInvite(ctx.db, workspaceId, inviteId);
  if (!invite || invite.accepted_at || invite.revoked_at) throw notFound('That invitation');
  await revokeInvite(ctx.db, invite.id, ctx.clock());
}

async function usableInvite(ctx: ServiceContext, token: string): Promise<InviteRow> {
  const invite = await findInviteByTokenHash(ctx.db, hashToken(token));
  if (!invite || invite.revoked_at) {
    throw new AppError(404, 'INVITE_NOT_FOUND', 'This invitation link is not valid: it may have been withdrawn. Ask the workspace owner for a new one.');
  }
  if (invite.accepted_at) throw new AppError(410, 'INVITE_USED', 'This invitation has already been used. Sign in instead.');
  if (invite.expires_at <= ctx.clock()) {
    throw new AppError(410, 'INVITE_EXPIRED', 'This invitation has expired. Ask the workspace owner for a new one.');
  }
  return invite;
}

export interface InvitePreview {
  workspaceName: string;
  email: string;
  role: Role;
  invitedBy: string | null;
  accountExists: boolean;
  expiresAt: string;
}

export async function previewInvite(ctx: ServiceContext, token: string): Promise<InvitePreview> {
  const invite = await usableInvite(ctx, token);
  const workspace = await findWorkspaceById(ctx.db, invite.workspace_id);
  const inviter = invite.invited_by ? await findUserById(ctx.db, invite.invited_by) : undefined;
  return {
    workspaceName: workspace?.name ?? '',
    email: invite.email,
    role: invite.role,
    invitedBy: inviter?.name ?? null,
    accountExists: Boolean(await findUserByEmail(ctx.db, invite.email)),
    expiresAt: invite.expires_at.toISOString(),
  };
}

/**
 * Accepts an invitation: as the signed-in account (whose e-mail must match), or by creating the
 * account when the address has none yet. Returns the account and whether it was just created
 * (the route then signs it in).
 */
export async function acceptInvite(
  ctx: ServiceContext,
  token: string,
  input: { sessionUserId: string | undefined; newAccount?: { name: string; password: string } },
): Promise<{ user: PublicUser; workspaceId: string; created: boolean }> {
  const invite = await usableInvite(ctx, token);
  let created = false;
  let user: PublicUser;
  if (input.sessionUserId) {
    const row = await findUserById(ctx.db, input.sessionUserId);
    if (!row) throw new AppError(401, 'UNAUTHENTICATED', 'Please sign in first.');
    if (row.email.toLowerCase() !== invite.email.toLowerCase()) {
      throw new AppError(403, 'INVITE_OTHER_ACCOUNT', `This invitation is for ${invite.email}; you are signed in as ${row.email}. Sign out and try again.`);
    }
    user = toPublicUser(row);
  } else {
    if (await findUserByEmail(ctx.db, invite.email)) {
      throw new AppError(401, 'SIGN_IN_TO_ACCEPT', `An account for ${invite.email} exists: sign in to accept.`);
    }
    if (!input.newAccount) {
      throw new AppError(400, 'VALIDATION', 'password: choose a password to create your account.');
    }
    const passwordHash = await hashPassword(input.newAccount.password);
    user = toPublicUser(await insertUser(ctx.db, { email: invite.email, name: input.newAccount.name, passwordHash }));
    created = true;
  }
  await ctx.db.transaction(async (trx) => {
    if (!(await markInviteAccepted(trx, invite.id, user.id, ctx.clock()))) {
      throw new AppError(410, 'INVITE_USED', 'This invitation has already been used. Sign in instead.');
    }
    // Someone already in the workspace keeps the role they have.
    if (!(await findMembership(trx, invite.workspace_id, user.id))) {
      await trx('memberships').insert({ workspace_id: invite.workspace_id, user_id: user.id, role: invite.role });
    }
  });
  return { user, workspaceId: invite.workspace_id, created };
}
