// run-render {cardId}: conforms one card with the engine into the workspace's render cache (temp name,
// then rename: a retry writes the same bytes), then settles the card row unless a newer attempt did.
import { randomBytes } from 'node:crypto';
import { mkdir, rm, stat } from 'node:fs/promises';
import path from 'node:path';
import { isBleedwrightError } from '../../shared/errors.ts';
import { makeFinding } from '../../shared/findings.ts';
import { openArtSet, type ArtSet } from '../engine/archive.ts';
import { ENGINE_TAG, renderCard } from '../engine/run.ts';
import { OPEN_CARD_STATES, claimCard, findCard, settleCard, settleRender, type RunCardRow } from '../../server/db/run-cards.ts';
import { findRun } from '../../server/db/runs.ts';
import { renderCacheName, storageKeys } from '../../server/storage.ts';
import { loadRunFacts, type RunFacts } from './load.ts';
import { cardSettled, refreshProgress } from './progress.ts';
import type { RunsRuntime } from './runtime.ts';

// Opening a zip reads its whole central directory (17 ms of CPU for 200 cards, growing with the set),
// so a worker keeps the sets of the last few runs it rendered: one open per run instead of one per
// card. Per run, not per file: the set counts the bytes read against the archive's total limit, as one
// CLI run does. Blobs are content-addressed and never rewritten; the file's identity is checked anyway.
const OPEN_SETS_KEPT = 4;
const openSets = new Map<string, { stamp: string; set: Promise<ArtSet> }>();

async function runArtSet(rt: RunsRuntime, run: RunFacts): Promise<ArtSet> {
  const file = await rt.storage.fetchFile(run.zipKey, rt.config.workDir);
  const info = await stat(file);
  const stamp = `${file}:${info.dev}:${info.ino}:${info.size}:${info.mtimeMs}`;
  const key = run.runId;
  const kept = openSets.get(key);
  if (kept && kept.stamp === stamp) return kept.set;
  const set = openArtSet(file);
  openSets.delete(key);
  openSets.set(key, { stamp, set });
  // A set that failed to open is not kept: the next card tries again.
  set.catch(() => {
    if (openSets.get(key)?.set === set) openSets.delete(key);
  });
  while (openSets.size > OPEN_SETS_KEPT) openSets.delete(openSets.keys().next().value!);
  return set;
}

/**
 * Claims the card for this attempt when its run is running (one statement in the common case); a card
 * of a run canceled (or failed) while it was queued is canceled instead. Undefined: nothing to render.
 */
async function claimForRender(rt: RunsRuntime, cardId: string): Promise<RunCardRow | undefined> {
  const claimed = await claimCard(rt.db, cardId, { runRunning: true });
  if (claimed) return claimed;
  const card = await findCard(rt.db, cardId);
  if (!card || !OPEN_CARD_STATES.includes(card.state)) return;
  const run = await findRun(rt.db, card.run_id);
  if (!run) return;
  if (run.state === 'running') return claimCard(rt.db, cardId);
  await rt.db('run_cards').where({ id: cardId }).whereIn('state', OPEN_CARD_STATES).update({ state: 'canceled', finished_at: rt.db.fn.now() });
  await refreshProgress(rt, run.id);
}

export async function renderRunCard(rt: RunsRuntime, cardId: string, finalAttempt: boolean): Promise<void> {
  const card = await claimForRender(rt, cardId);
  if (!card) return;
  const run = await loadRunFacts(rt, card.run_id);
  if (!run) return;

  const cacheKey = {
    workspace_id: run.workspaceId,
    recipe_version_id: run.recipeVersionId,
    engine: ENGINE_TAG,
    source_sha256: card.source_sha256,
    source_path: card.source,
  };
  const key = storageKeys.render(run.workspaceId, run.recipeVersionId, renderCacheName(card.source_sha256, card.source, ENGINE_TAG));
  // Rendered in this worker's own folder, then moved (or uploaded) into storage.
  const tmp = path.join(rt.config.workDir, 'tmp', `${randomBytes(8).toString('hex')}.png.part`);
  try {
    await mkdir(path.dirname(tmp), { recursive: true });
    let rendered;
    try {
      rendered = await renderCard({ set: await runArtSet(rt, run), source: card.source, role: card.role, title: card.title, recipe: run.recipe, pngPath: tmp });
    } catch (err) {
      // The archive refused this entry (size limits and the like): the card is skipped, the run goes on.
      if (!isBleedwrightError(err)) throw err;
      rendered = { pngPath: null, info: { sourcePx: null, format: null, findings: [makeFinding('UNREADABLE', {}, { reason: err.message })] } };
    }
    if (rendered.pngPath) await rt.storage.putFile(key, tmp);
    // The render's CRC-32 goes with its key: assembly then writes its bundle entry without hashing it again.
    const info = { ...rendered.info, renderKey: rendered.pngPath ? key : null, renderCrc32: rendered.pngPath ? (rendered.pngCrc32 ?? null) : null };
    // Logged, cached and settled in one statement (a stale attempt logs its render but settles nothing).
    await settleRender(
      rt.db,
      { runId: run.runId, cardId, cacheKey, storageKey: rendered.pngPath ? key : null },
      { state: rendered.pngPath ? 'done' : 'skipped', outputs: [], info, findings: rendered.info.findings },
    );
  } catch (err) {
    if (!finalAttempt) throw err;
    // Out of retries (storage unwritable, ...): the card fails with the reason and the run goes on.
    const reason = (err as Error).message.split('\n')[0] ?? 'unknown error';
    await settleCard(rt.db, cardId, { state: 'failed', cached: false, outputs: [], info: null, findings: [makeFinding('UNREADABLE', {}, { reason })] });
  } finally {
    await rm(tmp, { force: true });
  }
  await cardSettled(rt, run.runId);
}
