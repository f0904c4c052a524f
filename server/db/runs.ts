import type { Knex } from 'knex';
import type { RunDiff, RunOutput, RunTotals } from '../../shared/api/runs.ts';
import type { RunState } from '../../shared/run-states.ts';

export interface RunCounts {
  total: number;
  done: number;
  skipped: number;
  failed: number;
  cached: number;
  canceled: number;
  findings: { info: number; warn: number; error: number };
}

export interface RunRow {
  id: string;
  workspace_id: string;
  recipe_version_id: string;
  art_set_revision_id: string;
  state: RunState;
  counts: Partial<RunCounts>;
  totals: RunTotals | null;
  outputs: RunOutput[];
  diff: RunDiff | null;
  error: string | null;
  created_by: string | null;
  previous_run_id: string | null;
  created_at: Date;
  started_at: Date | null;
  finished_at: Date | null;
}

/** A run with the names the API shows (recipe, version, art set, revision). */
export interface RunView extends RunRow {
  recipe_id: string;
  recipe_name: string;
  version: number;
  art_set_id: string;
  art_set_name: string;
  revision: number;
}

function viewQuery(db: Knex) {
  return db('runs as r')
    .join('recipe_versions as v', 'v.id', 'r.recipe_version_id')
    .join('recipes as re', 're.id', 'v.recipe_id')
    .join('art_set_revisions as ar', 'ar.id', 'r.art_set_revision_id')
    .join('art_sets as a', 'a.id', 'ar.art_set_id')
    .select('r.*', 're.id as recipe_id', 're.name as recipe_name', 'v.version', 'a.id as art_set_id', 'a.name as art_set_name', 'ar.revision');
}

export async function listRuns(db: Knex, workspaceId: string, limit: number): Promise<RunView[]> {
  return viewQuery(db).where('r.workspace_id', workspaceId).orderBy('r.created_at', 'desc').limit(limit);
}

export async function findRunView(db: Knex, workspaceId: string, id: string): Promise<RunView | undefined> {
  return viewQuery(db).where({ 'r.workspace_id': workspaceId, 'r.id': id }).first();
}

export async function findRun(db: Knex, id: string): Promise<RunRow | undefined> {
  return db<RunRow>('runs').where({ id }).first();
}

export async function insertRun(
  db: Knex,
  row: Pick<RunRow, 'workspace_id' | 'recipe_version_id' | 'art_set_revision_id' | 'created_by' | 'previous_run_id'>,
): Promise<RunRow> {
  const [inserted] = await db<RunRow>('runs').insert(row).returning('*');
  return inserted!;
}

/** The latest earlier run of the same recipe on the same art set that finished (the diff's base). */
export async function findPreviousRun(db: Knex, opts: { workspaceId: string; recipeId: string; artSetId: string; before: Date }): Promise<RunRow | undefined> {
  return db('runs as r')
    .join('recipe_versions as v', 'v.id', 'r.recipe_version_id')
    .join('art_set_revisions as ar', 'ar.id', 'r.art_set_revision_id')
    .where({ 'r.workspace_id': opts.workspaceId, 'v.recipe_id': opts.recipeId, 'ar.art_set_id': opts.artSetId, 'r.state': 'done' })
    .andWhere('r.created_at', '<', opts.before)
    .orderBy('r.created_at', 'desc')
    .select('r.*')
    .first();
}

/** Moves a run from one of `from` to `to`; returns the row when this call made the change. */
export async function transitionRun(db: Knex, id: string, from: RunState[], to: RunState, patch: Record<string, unknown> = {}): Promise<RunRow | undefined> {
  const [row] = await db<RunRow>('runs')
    .where({ id })
    .whereIn('state', from)
    .update({ ...patch, state: to } as Partial<RunRow>)
    .returning('*');
  return row;
}

export async function updateRun(db: Knex, id: string, patch: Record<string, unknown>): Promise<void> {
  await db('runs').where({ id }).update(patch);
}

export async function isFollowing(db: Knex, runId: string, userId: string): Promise<boolean> {
  return !!(await db('run_followers').where({ run_id: runId, user_id: userId }).first());
}

export async function setFollowing(db: Knex, runId: string, userId: string, follow: boolean): Promise<void> {
  if (follow) await db('run_followers').insert({ run_id: runId, user_id: userId }).onConflict(['run_id', 'user_id']).ignore();
  else await db('run_followers').where({ run_id: runId, user_id: userId }).delete();
}

/** E-mail addresses of the starter and every follower, once each. */
export async function runRecipients(db: Knex, runId: string): Promise<string[]> {
  const rows = await db
    .select('u.email')
    .from('users as u')
    .whereIn('u.id', db('runs').where({ id: runId }).whereNotNull('created_by').select('created_by'))
    .orWhereIn('u.id', db('run_followers').where({ run_id: runId }).select('user_id'));
  return [...new Set(rows.map((r: { email: string }) => r.email))];
}
