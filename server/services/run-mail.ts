// The message sent when a run ends: to whoever started it and everyone following it.
import type { Knex } from 'knex';
import type { Mailer } from '../mail.ts';
import { findRunView, runRecipients } from '../db/runs.ts';

/** The run page in the client (src/app/router.tsx: /w/:workspaceId/runs/:runId). */
export const runPageUrl = (publicUrl: string, workspaceId: string, runId: string) => `${publicUrl.replace(/\/$/, '')}/w/${workspaceId}/runs/${runId}`;

export async function sendRunEndedMail(deps: { db: Knex; mailer: Mailer; publicUrl: string }, runId: string): Promise<number> {
  const run = await deps.db('runs').where({ id: runId }).first('workspace_id');
  if (!run) return 0;
  const view = await findRunView(deps.db, run.workspace_id, runId);
  if (!view) return 0;
  const to = await runRecipients(deps.db, runId);
  const c = view.counts ?? {};
  const f = c.findings ?? { info: 0, warn: 0, error: 0 };
  const title = `${view.recipe_name} v${view.version} on ${view.art_set_name} (revision ${view.revision})`;
  const lines = [
    `Your run ${title} is ${view.state}.`,
    '',
    `Cards: ${c.total ?? 0} (done ${c.done ?? 0}, from cache ${c.cached ?? 0}, skipped ${c.skipped ?? 0}, failed ${c.failed ?? 0}, canceled ${c.canceled ?? 0})`,
  ];
  if (view.totals) lines.push(`PDF pages: ${view.totals.pages}, padding added: ${view.totals.paddingAdded}`);
  lines.push(`Findings: ${f.error} errors, ${f.warn} warnings, ${f.info} notes`);
  if (view.error) lines.push('', `What went wrong: ${view.error}`);
  lines.push('', `Open the run: ${runPageUrl(deps.publicUrl, view.workspace_id, view.id)}`);
  for (const address of to) {
    await deps.mailer.send({ to: address, subject: `Run ${view.state}: ${title}`, text: lines.join('\n'), workspaceId: view.workspace_id });
  }
  return to.length;
}
