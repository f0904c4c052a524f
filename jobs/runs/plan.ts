// run-plan {runId}: lists the cards, inserts their rows (idempotently), computes what changed since the
// previous run, takes cached renders, and fans out one run-render job per remaining card.
import { orderFronts, type ManifestRow } from '../../shared/deck.ts';
import { isBleedwrightError } from '../../shared/errors.ts';
import type { Recipe } from '../../shared/recipe.ts';
import type { RunDiff } from '../../shared/api/runs.ts';
import type { Finding } from '../../shared/findings.ts';
import { ENGINE_TAG, cardSources, mapLimited } from '../engine/run.ts';
import { listEntries } from '../../server/db/art-sets.ts';
import { findCachedMany } from '../../server/db/render-cache.ts';
import { insertCards, listCards, settleCards } from '../../server/db/run-cards.ts';
import { transitionRun, updateRun } from '../../server/db/runs.ts';
import { finishRunFailed } from './finish.ts';
import { loadRun, openRunArtSet } from './load.ts';
import { refreshProgress, renderJobOptions } from './progress.ts';
import type { RunsRuntime } from './runtime.ts';

/** Changes by source path: added, changed (other bytes), removed; unchanged counted. */
export function diffCards(previous: ReadonlyArray<{ source: string; source_sha256: string }> | null, current: ReadonlyArray<{ source: string; source_sha256: string }>, previousRunId: string | null): RunDiff {
  if (!previous) return { previousRunId: null, added: [], changed: [], removed: [], unchanged: 0 };
  const before = new Map(previous.map((c) => [c.source, c.source_sha256]));
  const now = new Map(current.map((c) => [c.source, c.source_sha256]));
  const diff: RunDiff = { previousRunId, added: [], changed: [], removed: [], unchanged: 0 };
  for (const [source, sha] of now) {
    const old = before.get(source);
    if (old === undefined) diff.added.push(source);
    else if (old !== sha) diff.changed.push(source);
    else diff.unchanged++;
  }
  for (const source of before.keys()) if (!now.has(source)) diff.removed.push(source);
  return diff;
}

// Render jobs sent per statement: a big set's first renders start without waiting for all its jobs.
const RENDER_JOBS_PER_INSERT = 500;

// Storage existence checks run this many at once (a round trip each on S3).
const STORAGE_CHECKS_AT_ONCE = 16;

export type DeckColumns = { deck_order: number | null; copies: number | null; back_source: string | null };

/**
 * The engine's deck plan for each source, as stored on the card rows: fronts get their place in print
 * order, their copies and the back on their reverse (the manifest's back with `interleaved`, else the
 * recipe's common back); backs get nulls. Which fronts end up in the PDF still depends on which render.
 */
export function deckColumns(sources: ReadonlyArray<{ source: string; role: 'front' | 'back' }>, manifest: readonly ManifestRow[] | null, recipe: Pick<Recipe, 'order' | 'back' | 'sheet'>): Map<string, DeckColumns> {
  const fronts = sources.filter((s) => s.role === 'front').map((s) => s.source);
  const interleaved = recipe.back.placement === 'interleaved';
  const columns = new Map<string, DeckColumns>();
  orderFronts({ cards: fronts, recipe, manifest }).forEach((f, i) => {
    columns.set(f.source, { deck_order: i + 1, copies: f.copies, back_source: (interleaved ? f.back : null) ?? recipe.back.art });
  });
  return columns;
}

export async function planRun(rt: RunsRuntime, runId: string): Promise<void> {
  const loaded = await loadRun(rt, runId);
  if (!loaded) return;
  const { run, recipe } = loaded;
  if (run.state !== 'queued' && run.state !== 'running') return;
  await transitionRun(rt.db, runId, ['queued'], 'running', { started_at: rt.db.fn.now() });

  let sources;
  let manifest: ManifestRow[] | null = null;
  try {
    const set = await openRunArtSet(rt, loaded);
    manifest = set.manifest;
    sources = cardSources(set, recipe);
  } catch (err) {
    if (!isBleedwrightError(err)) throw err;
    await finishRunFailed(rt, runId, `${err.code}: ${err.message}`);
    return;
  }
  const revisionId = run.art_set_revision_id;
  const shaByPath = new Map((await listEntries(rt.db, revisionId)).map((e) => [e.path, e.sha256]));
  const deck = deckColumns(sources, manifest, recipe);
  await insertCards(
    rt.db,
    runId,
    sources.map((s, i) => ({
      seq: i + 1,
      source: s.source,
      role: s.role,
      title: s.title,
      source_sha256: shaByPath.get(s.source) ?? '',
      ...(s.role === 'front' ? deck.get(s.source) : undefined),
    })),
  );
  const cards = await listCards(rt.db, runId);
  const previous = run.previous_run_id ? await listCards(rt.db, run.previous_run_id) : null;
  await updateRun(rt.db, runId, { diff: JSON.stringify(diffCards(previous, cards, run.previous_run_id)) });

  // Cards whose (source bytes, name, recipe version) were rendered before are taken from the cache,
  // looked up in one query and settled in one statement: they never become render jobs.
  const open = cards.filter((c) => c.state === 'pending' || c.state === 'rendering');
  const cached = await findCachedMany(
    rt.db,
    { workspace_id: run.workspace_id, recipe_version_id: loaded.recipeVersionId, engine: ENGINE_TAG },
    open.map((c) => ({ source_sha256: c.source_sha256, source_path: c.source })),
  );
  const hitOf = new Map(cached.map((h) => [`${h.source_sha256}\0${h.source_path}`, h]));
  const hits = await mapLimited(open, STORAGE_CHECKS_AT_ONCE, async (card) => {
    const hit = hitOf.get(`${card.source_sha256}\0${card.source}`);
    // A render whose file has gone from storage is rendered again.
    return hit && (!hit.storage_key || (await rt.storage.exists(hit.storage_key))) ? hit : null;
  });
  const toRender: string[] = [];
  const settled: Parameters<typeof settleCards>[1][number][] = [];
  for (const [i, card] of open.entries()) {
    const hit = hits[i];
    if (!hit) {
      toRender.push(card.id);
      continue;
    }
    const info = hit.info as Record<string, unknown> & { findings: Finding[] };
    settled.push({ id: card.id, state: hit.storage_key ? 'done' : 'skipped', cached: true, outputs: [], info, findings: info.findings });
  }
  // One statement for every cached card (195 of 200 on a typical rerun), not one round trip each.
  await settleCards(rt.db, settled);
  // A few statements for all the render jobs, not a round trip each; renders start after the first.
  // A duplicate (a retried plan) is dropped by the singleton key; the render is idempotent anyway.
  for (let i = 0; i < toRender.length; i += RENDER_JOBS_PER_INSERT) {
    const batch = toRender.slice(i, i + RENDER_JOBS_PER_INSERT);
    await rt.sendMany('run-render', batch.map((cardId) => ({ data: { cardId }, options: { singletonKey: cardId, ...renderJobOptions(rt) } })));
  }
  await refreshProgress(rt, runId);
}
