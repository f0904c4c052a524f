import { Router } from 'express';
import type { AppDeps } from '../context.ts';
import { findWorkspaceById, listWorkspacesForUser } from '../db/workspaces.ts';
import { notFound } from '../errors.ts';
import { ANY_ROLE, requireMember, requireUser } from '../middleware/auth.ts';
import type { WorkspaceSummary } from './workspaces.schema.ts';

export function workspaceRoutes(deps: AppDeps): Router {
  const router = Router();

  router.get('/', requireUser(deps.db), async (req, res) => {
    const rows = await listWorkspacesForUser(deps.db, req.user!.id);
    const body: WorkspaceSummary[] = rows.map((w) => ({ id: w.id, name: w.name, slug: w.slug, role: w.role }));
    res.json(body);
  });

  router.get('/:workspaceId', requireMember(deps.db, ANY_ROLE), async (req, res) => {
    const ws = await findWorkspaceById(deps.db, req.member!.workspaceId);
    if (!ws) throw notFound('That workspace');
    const body: WorkspaceSummary = { id: ws.id, name: ws.name, slug: ws.slug, role: req.member!.role };
    res.json(body);
  });

  return router;
}
