import type { Knex } from 'knex';

export interface ShareRowDb {
  id: string;
  run_id: string;
  token_hash: string;
  label: string | null;
  expires_at: Date;
  revoked_at: Date | null;
  downloads: number;
  created_by: string | null;
  created_at: Date;
}

export async function insertShare(db: Knex, row: Pick<ShareRowDb, 'run_id' | 'token_hash' | 'label' | 'expires_at' | 'created_by'>): Promise<ShareRowDb> {
  const [inserted] = await db<ShareRowDb>('share_links').insert(row).returning('*');
  return inserted!;
}

export async function listShares(db: Knex, runId: string): Promise<ShareRowDb[]> {
  return db<ShareRowDb>('share_links').where({ run_id: runId }).orderBy('created_at', 'desc');
}

export async function revokeShare(db: Knex, runId: string, id: string, now: Date): Promise<boolean> {
  const row = await db<ShareRowDb>('share_links').where({ run_id: runId, id }).first();
  if (!row) return false;
  if (!row.revoked_at) await db('share_links').where({ id }).update({ revoked_at: now });
  return true;
}

/** A live link by token hash, with the run and workspace it opens. */
export async function findLiveShare(db: Knex, tokenHash: string, now: Date) {
  return db('share_links as s')
    .join('runs as r', 'r.id', 's.run_id')
    .join('workspaces as w', 'w.id', 'r.workspace_id')
    .where('s.token_hash', tokenHash)
    .whereNull('s.revoked_at')
    .andWhere('s.expires_at', '>', now)
    .select('s.*', 'r.workspace_id', 'w.name as workspace_name')
    .first() as Promise<(ShareRowDb & { workspace_id: string; workspace_name: string }) | undefined>;
}

export async function countDownload(db: Knex, id: string): Promise<void> {
  await db('share_links').where({ id }).increment('downloads', 1);
}
