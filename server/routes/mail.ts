import { Router } from 'express';
import type { AppDeps } from '../context.ts';
import { AppError } from '../errors.ts';
import { OWNER, requireMember } from '../middleware/auth.ts';
import type { CapturedMailView } from './workspaces.schema.ts';

/** Mounted at /api/workspaces/:workspaceId/mail: the demo mail catcher's messages for this workspace. */
export function mailRoutes(deps: AppDeps): Router {
  const router = Router({ mergeParams: true });
  router.get('/', requireMember(deps.db, OWNER), (req, res) => {
    if (!deps.mailbox) {
      throw new AppError(404, 'MAIL_CATCHER_OFF', 'Mail goes to a real mail server here, so there is no captured mail to show.');
    }
    const body: CapturedMailView[] = deps.mailbox
      .list()
      .filter((m) => m.workspaceId === req.member!.workspaceId)
      .map(({ workspaceId: _w, ...m }) => m);
    res.json(body);
  });
  return router;
}
