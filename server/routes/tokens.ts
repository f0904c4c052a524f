import { Router } from 'express';
import { z } from 'zod';
import type { AppDeps } from '../context.ts';
import { notFound } from '../errors.ts';
import { ANY_ROLE, requireMember } from '../middleware/auth.ts';
import { apiTokenList, createApiToken, revokeApiToken } from '../services/tokens.ts';
import { createTokenBodySchema, type CreateTokenResponse, type TokenListResponse } from './tokens.schema.ts';

/** Mounted at /api/workspaces/:workspaceId/tokens: every member manages their own tokens (signed in, not by token). */
export function tokenRoutes(deps: AppDeps): Router {
  const router = Router({ mergeParams: true });
  const member = requireMember(deps.db, ANY_ROLE);

  router.get('/', member, async (req, res) => {
    const body: TokenListResponse = { tokens: await apiTokenList(deps.db, req.member!.workspaceId, req.member!.userId) };
    res.setHeader('Cache-Control', 'no-store');
    res.json(body);
  });

  router.post('/', member, async (req, res) => {
    const { name } = createTokenBodySchema.parse(req.body);
    const body: CreateTokenResponse = await createApiToken(deps.db, req.member!.workspaceId, req.member!.userId, name);
    res.setHeader('Cache-Control', 'no-store');
    res.status(201).json(body);
  });

  router.delete('/:tokenId', member, async (req, res) => {
    const id = z.uuid().safeParse(req.params.tokenId);
    if (!id.success) throw notFound('That token');
    await revokeApiToken(deps.db, req.member!, id.data, deps.clock());
    res.status(204).end();
  });

  return router;
}
