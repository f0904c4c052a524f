import type { Knex } from 'knex';

export interface ApiTokenRow {
  id: string;
  workspace_id: string;
  user_id: string;
  name: string;
  token_hash: string;
  prefix: string;
  created_at: Date;
  last_used_at: Date | null;
  revoked_at: Date | null;
}

export async function insertToken(db: Knex, row: Pick<ApiTokenRow, 'workspace_id' | 'user_id' | 'name' | 'token_hash' | 'prefix'>): Promise<ApiTokenRow> {
  const [inserted] = await db<ApiTokenRow>('api_tokens').insert(row).returning('*');
  return inserted!;
}

export async function listTokens(db: Knex, workspaceId: string, userId: string): Promise<ApiTokenRow[]> {
  return db<ApiTokenRow>('api_tokens').where({ workspace_id: workspaceId, user_id: userId }).orderBy('created_at', 'desc');
}

export async function findTokenById(db: Knex, workspaceId: string, id: string): Promise<ApiTokenRow | undefined> {
  return db<ApiTokenRow>('api_tokens').where({ workspace_id: workspaceId, id }).first();
}

/** A live (not revoked) token by its hash. */
export async function findLiveTokenByHash(db: Knex, tokenHash: string): Promise<ApiTokenRow | undefined> {
  return db<ApiTokenRow>('api_tokens').where({ token_hash: tokenHash }).whereNull('revoked_at').first();
}

export async function revokeToken(db: Knex, id: string, now: Date): Promise<void> {
  await db('api_tokens').where({ id }).whereNull('revoked_at').update({ revoked_at: now });
}

/** Records use at most once a minute per token (one write per request would be wasted work). */
export async function touchToken(db: Knex, id: string, now: Date): Promise<void> {
  const minuteAgo = new Date(now.getTime() - 60_000);
  await db('api_tokens')
    .where({ id })
    .andWhere((q) => q.whereNull('last_used_at').orWhere('last_used_at', '<', minuteAgo))
    .update({ last_used_at: now });
}
