// Share links: an expiring, revocable link to a finished run's downloads for someone without an
// account. Only the sha256 of the token is stored; the token itself appears once, in the create answer.
import { createHash, randomBytes } from 'node:crypto';
import type { Knex } from 'knex';
import type { PublicShare, ShareCreated, ShareRow } from '../../shared/api/runs.ts';
import { AppError, notFound } from '../errors.ts';
import { countDownload, findLiveShare, insertShare, listShares, revokeShare } from '../db/shares.ts';
import { findRunView } from '../db/runs.ts';
import { storageKeys } from '../storage.ts';
import { findRunOr404 } from './runs.ts';

export const hashToken = (token: string) => createHash('sha256').update(token).digest('hex');
const TOKEN = /^[A-Za-z0-9_-]{20,100}$/;
const shareNotFound = () => new AppError(404, 'SHARE_NOT_FOUND', 'This share link does not exist, has expired or was revoked: ask for a new one.');

export async function createShare(
  db: Knex,
  opts: { workspaceId: string; runId: string; userId: string; expiresInHours: number; label?: string; now: Date; publicUrl: string },
): Promise<ShareCreated> {
  const run = await findRunOr404(db, opts.workspaceId, opts.runId);
  if (run.state !== 'done') throw new AppError(409, 'RUN_NOT_DONE', 'Only a finished run can be shared: wait until it is done.');
  const token = randomBytes(24).toString('base64url');
  const row = await insertShare(db, {
    run_id: run.id,
    token_hash: hashToken(token),
    label: opts.label?.trim() || null,
    expires_at: new Date(opts.now.getTime() + opts.expiresInHours * 3600_000),
    created_by: opts.userId,
  });
  return { id: row.id, url: `${opts.publicUrl.replace(/\/$/, '')}/s/${token}`, expiresAt: row.expires_at.toISOString(), label: row.label };
}

export async function shareList(db: Knex, workspaceId: string, runId: string): Promise<ShareRow[]> {
  const run = await findRunOr404(db, workspaceId, runId);
  return (await listShares(db, run.id)).map((s) => ({
    id: s.id,
    label: s.label,
    expiresAt: new Date(s.expires_at).toISOString(),
    revokedAt: s.revoked_at ? new Date(s.revoked_at).toISOString() : null,
    createdAt: new Date(s.created_at).toISOString(),
    downloads: s.downloads,
  }));
}

export async function revoke(db: Knex, workspaceId: string, runId: string, shareId: string, now: Date): Promise<void> {
  const run = await findRunOr404(db, workspaceId, runId);
  if (!(await revokeShare(db, run.id, shareId, now))) throw notFound('That share link');
}

async function liveShare(db: Knex, token: string, now: Date) {
  if (!TOKEN.test(token)) throw shareNotFound();
  const share = await findLiveShare(db, hashToken(token), now);
  if (!share) throw shareNotFound();
  const run = await findRunView(db, share.workspace_id, share.run_id);
  if (!run || run.state !== 'done') throw shareNotFound();
  return { share, run };
}

export async function publicShare(db: Knex, token: string, now: Date): Promise<PublicShare> {
  const { share, run } = await liveShare(db, token, now);
  return {
    runTitle: `${run.recipe_name} on ${run.art_set_name} (revision ${run.revision})`,
    workspaceName: share.workspace_name,
    expiresAt: new Date(share.expires_at).toISOString(),
    files: (run.outputs ?? []).map((o) => ({ name: o.name, bytes: o.bytes })),
  };
}

/** Storage key of a shared file (only names the run lists), counting the download. */
export async function sharedFile(deps: { db: Knex }, token: string, name: string, now: Date) {
  const { share, run } = await liveShare(deps.db, token, now);
  const output = (run.outputs ?? []).find((o) => o.name === name);
  if (!output) throw notFound('That file');
  await countDownload(deps.db, share.id);
  return { key: storageKeys.runFile(run.workspace_id, run.id, output.name), name: output.name };
}
