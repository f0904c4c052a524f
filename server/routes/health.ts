import { Router } from 'express';
import type { AppDeps } from '../context.ts';

export function healthRoutes(deps: AppDeps): Router {
  const router = Router();
  // 200 when the database and the job queue both answer, else 503 with the part that is down.
  router.get('/', async (_req, res) => {
    const database = await deps.db
      .raw('select 1')
      .then(() => 'ok' as const)
      .catch(() => 'down' as const);
    const queue = deps.queue && (await deps.queue.healthy()) ? ('ok' as const) : ('down' as const);
    res.status(database === 'ok' && queue === 'ok' ? 200 : 503).json({ database, queue });
  });
  return router;
}
