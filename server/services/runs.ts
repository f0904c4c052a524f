// Runs as the API shows them, and the few things a person does to one: start, cancel, follow.
// The work itself happens in the pg-boss jobs (jobs/runs/).
import type { Knex } from 'knex';
import sharp from 'sharp';
import type { RunCard, RunDetail, RunSummary } from '../../shared/api/runs.ts';
import type { Severity } from '../../shared/findings.ts';
import { AppError, notFound } from '../errors.ts';
import { findArtSet, findRevision } from '../db/art-sets.ts';
import { findRecipe, latestVersion } from '../db/recipes.ts';
import { cancelOpenCards, countCards, findCard, listCards, type RunCardRow } from '../db/run-cards.ts';
import {
  findPreviousRun,
  findRunView,
  insertRun,
  isFollowing,
  listRuns,
  setFollowing,
  transitionRun,
  updateRun,
  type RunView,
} from '../db/runs.ts';
import { storageKeys, type Storage } from '../storage.ts';

export type SendJob = (name: string, data: object, options?: Record<string, unknown>) => Promise<string | null>;

const iso = (d: Date | string | null) => (d ? new Date(d).toISOString() : null);

export function runSummary(r: RunView): RunSummary {
  const c = r.counts ?? {};
  return {
    id: r.id,
    state: r.state,
    recipe: { id: r.recipe_id, name: r.recipe_name, version: r.version },
    artSet: { id: r.art_set_id, name: r.art_set_name, revision: r.revision },
    progress: { total: c.total ?? 0, done: c.done ?? 0, skipped: c.skipped ?? 0, failed: c.failed ?? 0, cached: c.cached ?? 0 },
    findings: { info: c.findings?.info ?? 0, warn: c.findings?.warn ?? 0, error: c.findings?.error ?? 0 },
    createdAt: iso(r.created_at)!,
    startedAt: iso(r.started_at),
    finishedAt: iso(r.finished_at),
    error: r.error,
    createdBy: r.created_by,
  };
}

export async function runSummaries(db: Knex, workspaceId: string, limit: number): Promise<RunSummary[]> {
  return (await listRuns(db, workspaceId, limit)).map(runSummary);
}

export async function findRunOr404(db: Knex, workspaceId: string, runId: string): Promise<RunView> {
  const run = await findRunView(db, workspaceId, runId);
  if (!run) throw notFound('That run');
  return run;
}

export async function runDetail(db: Knex, workspaceId: string, runId: string, userId: string | null): Promise<RunDetail> {
  const run = await findRunOr404(db, workspaceId, runId);
  return {
    ...runSummary(run),
    totals: run.totals,
    outputs: run.outputs ?? [],
    diff: run.diff ?? { previousRunId: run.previous_run_id, added: [], changed: [], removed: [], unchanged: 0 },
    following: userId ? await isFollowing(db, run.id, userId) : false,
  };
}

/** Creates a queued run pinning the recipe's latest version and the art set's revision, and plans it. */
export async function startRun(
  deps: { db: Knex; send: SendJob },
  opts: { workspaceId: string; userId: string | null; recipeId: string; artSetId: string; revision?: number },
): Promise<string> {
  const { db } = deps;
  const recipe = await findRecipe(db, opts.workspaceId, opts.recipeId);
  if (!recipe) throw notFound('That recipe');
  if (recipe.archived_at) throw new AppError(409, 'RECIPE_ARCHIVED', 'This recipe is archived: restore it before starting a run.');
  const set = await findArtSet(db, opts.workspaceId, opts.artSetId);
  if (!set) throw notFound('That art set');
  const rev = await findRevision(db, set.id, opts.revision);
  if (!rev) throw notFound('That art set revision');
  const version = (await latestVersion(db, recipe.id))!;
  const previous = await findPreviousRun(db, { workspaceId: opts.workspaceId, recipeId: recipe.id, artSetId: set.id, before: new Date(Date.now() + 1000) });
  const run = await insertRun(db, {
    workspace_id: opts.workspaceId,
    recipe_version_id: version.id,
    art_set_revision_id: rev.id,
    created_by: opts.userId,
    previous_run_id: previous?.id ?? null,
  });
  const id = await deps.send('run-plan', { runId: run.id }, { singletonKey: run.id });
  if (!id) throw new Error(`run-plan for ${run.id} was not accepted`);
  return run.id;
}

/** Stops new renders: open cards become `canceled`, the run `canceled`; renders in flight finish. */
export async function cancelRun(db: Knex, workspaceId: string, runId: string, now: Date): Promise<void> {
  const run = await findRunOr404(db, workspaceId, runId);
  if (run.state === 'done' || run.state === 'failed' || run.state === 'canceled') {
    throw new AppError(409, 'RUN_FINISHED', `This run is already ${run.state}; there is nothing to cancel.`);
  }
  await db.transaction(async (trx) => {
    const changed = await transitionRun(trx, runId, ['queued', 'running'], 'canceled', { finished_at: now });
    if (!changed) return;
    await cancelOpenCards(trx, runId);
    const counts = await countCards(trx, runId);
    await updateRun(trx, runId, { counts: JSON.stringify(counts) });
  });
}

export async function followRun(db: Knex, workspaceId: string, runId: string, userId: string, follow: boolean): Promise<void> {
  await findRunOr404(db, workspaceId, runId);
  await setFollowing(db, runId, userId, follow);
}

function cardView(c: RunCardRow, backIds: ReadonlyMap<string, string>): RunCard {
  const info = (c.info ?? {}) as { sourcePx?: { w: number; h: number } | null; effectiveDpi?: number; turn?: string; fill?: string };
  return {
    id: c.id,
    seq: c.seq,
    source: c.source,
    role: c.role,
    state: c.state,
    cached: c.cached,
    outputs: c.outputs,
    sourcePx: info.sourcePx ?? null,
    effectiveDpi: info.effectiveDpi ?? null,
    turn: info.turn ?? null,
    fill: info.fill ?? null,
    findings: c.findings,
    deckOrder: c.deck_order,
    copies: c.copies,
    back: c.back_source === null ? null : (backIds.get(c.back_source) ?? null),
  };
}

/** The cards of a run; with `severity`, only cards that have a finding of that severity. */
export async function runCards(db: Knex, workspaceId: string, runId: string, severity?: Severity): Promise<RunCard[]> {
  await findRunOr404(db, workspaceId, runId);
  const cards = await listCards(db, runId);
  const backIds = new Map(cards.filter((c) => c.role === 'back').map((c) => [c.source, c.id]));
  return cards.filter((c) => !severity || c.findings.some((f) => f.severity === severity)).map((c) => cardView(c, backIds));
}

/** Storage key of a card's conformed PNG (full) or of its cached webp thumbnail (made on first ask). */
export async function cardImage(deps: { db: Knex; storage: Storage; workDir: string }, workspaceId: string, runId: string, cardId: string, size: 'thumb' | 'full') {
  const run = await findRunOr404(deps.db, workspaceId, runId);
  const card = await findCard(deps.db, cardId);
  if (!card || card.run_id !== run.id) throw notFound('That card');
  const key = (card.info as { renderKey?: string } | null)?.renderKey;
  if (card.state !== 'done' || !key || !(await deps.storage.exists(key))) throw notFound('That card image');
  if (size === 'full') return { key, type: 'image/png' };
  const thumbKey = key.replace(/\.png$/, '.thumb.webp');
  if (!(await deps.storage.exists(thumbKey))) {
    await deps.storage.put(thumbKey, await sharp(await deps.storage.fetchFile(key, deps.workDir)).resize(240, 240, { fit: 'inside' }).webp({ quality: 80 }).toBuffer());
  }
  return { key: thumbKey, type: 'image/webp' };
}

/** Storage key of one of a run's outputs, by its listed name only. */
export async function runOutputFile(deps: { db: Knex; storage: Storage }, workspaceId: string, runId: string, name: string) {
  const run = await findRunOr404(deps.db, workspaceId, runId);
  const output = (run.outputs ?? []).find((o) => o.name === name);
  if (!output) throw notFound('That file');
  return { key: storageKeys.runFile(run.workspace_id, run.id, output.name), name: output.name, kind: output.kind };
}
