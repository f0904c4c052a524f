import { Router } from 'express';
import type { PublicShareResponse } from '../../shared/api/runs.ts';
import type { AppDeps } from '../context.ts';
import { publicShare, sharedFile } from '../services/shares.ts';
import { sendAttachment } from './runs.ts';

/** Mounted at /api/share: no account needed, the token is the key. */
export function publicShareRoutes(deps: AppDeps): Router {
  const router = Router();
  router.get('/:token', async (req, res) => {
    res.setHeader('Cache-Control', 'no-store');
    const body: PublicShareResponse = { share: await publicShare(deps.db, String(req.params.token), deps.clock()) };
    res.json(body);
  });
  router.get('/:token/files/:name', async (req, res) => {
    const file = await sharedFile({ db: deps.db }, String(req.params.token), String(req.params.name), deps.clock());
    await sendAttachment(req, res, deps.runs.storage, file.key, file.name);
  });
  return router;
}
