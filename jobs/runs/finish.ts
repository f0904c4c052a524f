import { countCards } from '../../server/db/run-cards.ts';
import { transitionRun } from '../../server/db/runs.ts';
import { sendRunEndedMail } from '../../server/services/run-mail.ts';
import type { RunsRuntime } from './runtime.ts';

/** Mail is a courtesy: a mail server that is down must not fail the run. */
export async function mailRunEnded(rt: RunsRuntime, runId: string): Promise<void> {
  try {
    await sendRunEndedMail({ db: rt.db, mailer: rt.mailer, publicUrl: rt.publicUrl() }, runId);
  } catch (err) {
    rt.logger.warn({ err, runId }, 'run mail could not be sent');
  }
}

/** Marks a running (or queued) run failed with a sentence saying why; open cards are canceled. */
export async function finishRunFailed(rt: RunsRuntime, runId: string, error: string): Promise<void> {
  const changed = await rt.db.transaction(async (trx) => {
    const row = await transitionRun(trx, runId, ['queued', 'running'], 'failed', { error, finished_at: trx.fn.now() });
    if (!row) return false;
    await trx('run_cards').where({ run_id: runId }).whereIn('state', ['pending', 'rendering']).update({ state: 'canceled', finished_at: trx.fn.now() });
    await trx('runs').where({ id: runId }).update({ counts: JSON.stringify(await countCards(trx, runId)) });
    return true;
  });
  if (changed) await mailRunEnded(rt, runId);
}
