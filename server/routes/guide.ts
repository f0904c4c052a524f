import { Router } from 'express';
import type { GuideResponse } from '../../shared/api/runs.ts';
import type { AppDeps } from '../context.ts';
import { guideSteps } from '../db/guide-progress.ts';
import { ANY_ROLE, requireMember } from '../middleware/auth.ts';

/**
 * Mounted at /api/workspaces/:workspaceId/guide: the first-run guide steps the signed-in member has
 * done here. They are recorded by the runs routes (a card image fetched at full size, a combined PDF
 * downloaded), so the guide follows the person from browser to browser.
 */
export function guideRoutes(deps: AppDeps): Router {
  const router = Router({ mergeParams: true });
  router.get('/', requireMember(deps.db, ANY_ROLE), async (req, res) => {
    const done = await guideSteps(deps.db, req.member!.workspaceId, req.member!.userId);
    const body: GuideResponse = { guide: { proofChecked: done.has('proof'), pdfDownloaded: done.has('pdf') } };
    res.json(body);
  });
  return router;
}
