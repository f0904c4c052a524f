import { countCards } from '../../server/db/run-cards.ts';
import { updateRun } from '../../server/db/runs.ts';
import type { RunsRuntime } from './runtime.ts';

/**
 * Recounts a run's progress from its card rows and, when no card is left open on a running run,
 * asks for the assemble job (singletonKey: duplicate asks are dropped; assemble is idempotent).
 */
export async function refreshProgress(rt: RunsRuntime, runId: string): Promise<void> {
  const counts = await countCards(rt.db, runId);
  await updateRun(rt.db, runId, { counts: JSON.stringify(counts) });
  if (counts.open > 0) return;
  const run = await rt.db('runs').where({ id: runId }).first('state');
  if (run?.state === 'running') await rt.send('run-assemble', { runId }, { singletonKey: runId, retryLimit: 3, retryDelay: 2, expireInSeconds: rt.config.assembleExpireSeconds });
}

/** Set on every send (not only on the queue), so each process's configured expiry applies. */
export function renderJobOptions(rt: RunsRuntime) {
  return { retryLimit: 3, retryDelay: 1, expireInSeconds: rt.config.renderExpireSeconds };
}
