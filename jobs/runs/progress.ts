import { openCardsLeft, refreshCounts } from '../../server/db/run-cards.ts';
import type { RunsRuntime } from './runtime.ts';

/**
 * Recounts a run's progress from its card rows (one statement) and, when no card is left open on a
 * running run, asks for the assemble job (singletonKey: duplicate asks are dropped; assemble is idempotent).
 */
export async function refreshProgress(rt: RunsRuntime, runId: string): Promise<void> {
  noteWritten(runId);
  const run = await refreshCounts(rt.db, runId);
  if (run && run.open === 0) written.delete(runId);
  if (run?.state === 'running' && run.open === 0) await sendAssemble(rt, runId);
}

// The counts shown while a run renders are written at most this often per run by one process (a recount
// reads every card of the run); a settle inside the window still checks exactly whether it was the last
// open card, and a trailing write follows so the shown progress catches up.
const COUNTS_EVERY_MS = 200;
const RUNS_TRACKED = 256;
const written = new Map<string, { at: number; trailing: NodeJS.Timeout | null }>();

function noteWritten(runId: string): void {
  const entry = written.get(runId);
  if (entry?.trailing) clearTimeout(entry.trailing);
  written.delete(runId);
  written.set(runId, { at: Date.now(), trailing: null });
  while (written.size > RUNS_TRACKED) {
    const [oldest, old] = written.entries().next().value!;
    if (old.trailing) clearTimeout(old.trailing);
    written.delete(oldest);
  }
}

/**
 * After a card of the run settled: the counts are written (at most every COUNTS_EVERY_MS), and the
 * assemble job is asked for when no card is left open, checked exactly after every settle.
 */
export async function cardSettled(rt: RunsRuntime, runId: string): Promise<void> {
  const entry = written.get(runId);
  if (!entry || Date.now() - entry.at >= COUNTS_EVERY_MS) return refreshProgress(rt, runId);
  const run = await openCardsLeft(rt.db, runId);
  // The last card, or a run no longer running (canceled while this render ran): exact counts now.
  if (!run || !run.open || run.state !== 'running') return refreshProgress(rt, runId);
  if (entry.trailing) return;
  // Counts only: the assemble job is asked for by the settle that saw no card left open, never by a timer.
  entry.trailing = setTimeout(
    () => {
      entry.trailing = null;
      noteWritten(runId);
      refreshCounts(rt.db, runId).catch((err) => rt.logger.warn({ err, runId }, 'run progress could not be written'));
    },
    Math.max(0, entry.at + COUNTS_EVERY_MS - Date.now()),
  );
  entry.trailing.unref();
}

// Two last cards settling at once (in two processes) both see none left open and both ask. The job id is
// the run's, so the second ask is dropped even when the first job is already being worked (a singletonKey
// only drops a duplicate of a job still queued).
async function sendAssemble(rt: RunsRuntime, runId: string): Promise<void> {
  await rt.send('run-assemble', { runId }, { id: runId, singletonKey: runId, retryLimit: 3, retryDelay: 2, expireInSeconds: rt.config.assembleExpireSeconds });
}

/** Set on every send (not only on the queue), so each process's configured expiry applies. */
export function renderJobOptions(rt: RunsRuntime) {
  return { retryLimit: 3, retryDelay: 1, expireInSeconds: rt.config.renderExpireSeconds };
}
