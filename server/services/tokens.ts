// API tokens: a member makes named tokens for one workspace; a token acts with its owner's current role
// there (checked on every request), so a removed or demoted member's tokens lose access at once.
// Only the sha256 is stored; the token itself is shown once, at creation.
import { createHash, randomBytes } from 'node:crypto';
import type { Knex } from 'knex';
import { notFound } from '../errors.ts';
import { findLiveTokenByHash, findTokenById, insertToken, listTokens, revokeToken, touchToken, type ApiTokenRow } from '../db/tokens.ts';
import { findMembership } from '../db/memberships.ts';
import type { Role } from '../roles.ts';
import type { ApiToken, CreateTokenResponse } from '../routes/tokens.schema.ts';

export const TOKEN_PREFIX = 'bw_';
/** `bw_` then 43 base64url characters (32 random bytes). */
const TOKEN_SHAPE = /^bw_[A-Za-z0-9_-]{43}$/;

export const hashApiToken = (token: string) => createHash('sha256').update(token).digest('hex');

function view(row: ApiTokenRow): ApiToken {
  const iso = (d: Date | null) => (d ? new Date(d).toISOString() : null);
  return { id: row.id, name: row.name, prefix: row.prefix, createdAt: new Date(row.created_at).toISOString(), lastUsedAt: iso(row.last_used_at), revokedAt: iso(row.revoked_at) };
}

export async function createApiToken(db: Knex, workspaceId: string, userId: string, name: string): Promise<CreateTokenResponse> {
  const secret = `${TOKEN_PREFIX}${randomBytes(32).toString('base64url')}`;
  const row = await insertToken(db, { workspace_id: workspaceId, user_id: userId, name, token_hash: hashApiToken(secret), prefix: secret.slice(0, 9) });
  return { token: view(row), secret };
}

export async function apiTokenList(db: Knex, workspaceId: string, userId: string): Promise<ApiToken[]> {
  return (await listTokens(db, workspaceId, userId)).map(view);
}

/** Members revoke their own tokens; owners may revoke any token of the workspace. */
export async function revokeApiToken(db: Knex, member: { workspaceId: string; userId: string; role: Role }, tokenId: string, now: Date): Promise<void> {
  const row = await findTokenById(db, member.workspaceId, tokenId);
  if (!row || (row.user_id !== member.userId && member.role !== 'owner')) throw notFound('That token');
  await revokeToken(db, row.id, now);
}

export interface TokenIdentity {
  tokenId: string;
  workspaceId: string;
  userId: string;
  role: Role;
}

/** The live token's identity, with the owner's current role; null for an unknown, revoked or orphaned token. */
export async function authenticateApiToken(db: Knex, token: string, now: Date): Promise<TokenIdentity | null> {
  if (!TOKEN_SHAPE.test(token)) return null;
  const row = await findLiveTokenByHash(db, hashApiToken(token));
  if (!row) return null;
  const membership = await findMembership(db, row.workspace_id, row.user_id);
  if (!membership) return null;
  await touchToken(db, row.id, now);
  return { tokenId: row.id, workspaceId: row.workspace_id, userId: row.user_id, role: membership.role };
}
