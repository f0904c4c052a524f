import type { Knex } from 'knex';

/** First-run guide steps the server records as they happen (see migrations/..._create-guide-progress.ts). */
export const GUIDE_STEPS = ['proof', 'pdf'] as const;
export type GuideStep = (typeof GUIDE_STEPS)[number];

/** Records a step once; doing it again keeps the first time. */
export async function recordGuideStep(db: Knex, workspaceId: string, userId: string, step: GuideStep): Promise<void> {
  await db('guide_progress').insert({ workspace_id: workspaceId, user_id: userId, step }).onConflict(['workspace_id', 'user_id', 'step']).ignore();
}

export async function guideSteps(db: Knex, workspaceId: string, userId: string): Promise<Set<GuideStep>> {
  const rows = await db('guide_progress').where({ workspace_id: workspaceId, user_id: userId }).select<Array<{ step: GuideStep }>>('step');
  return new Set(rows.map((r) => r.step));
}
