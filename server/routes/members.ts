import { Router } from 'express';
import { z } from 'zod';
import type { AppDeps } from '../context.ts';
import { notFound } from '../errors.ts';
import { ANY_ROLE, OWNER, requireMember } from '../middleware/auth.ts';
import { changeMemberRole, listMembers, removeMember } from '../services/members.ts';
import { changeRoleSchema, type Member } from './workspaces.schema.ts';

const userIdParam = z.uuid();

/** Mounted at /api/workspaces/:workspaceId/members. */
export function memberRoutes(deps: AppDeps): Router {
  const router = Router({ mergeParams: true });
  const parseUserId = (raw: unknown) => {
    const parsed = userIdParam.safeParse(raw);
    if (!parsed.success) throw notFound('That member');
    return parsed.data;
  };

  router.get('/', requireMember(deps.db, ANY_ROLE), async (req, res) => {
    const rows = await listMembers(deps.db, req.member!.workspaceId);
    const body: Member[] = rows.map((m) => ({ ...m, joinedAt: new Date(m.joinedAt).toISOString() }));
    res.json(body);
  });

  router.patch('/:userId', requireMember(deps.db, OWNER), async (req, res) => {
    const { role } = changeRoleSchema.parse(req.body);
    await changeMemberRole(deps.db, req.member!.workspaceId, parseUserId(req.params.userId), role);
    res.status(204).end();
  });

  router.delete('/:userId', requireMember(deps.db, OWNER), async (req, res) => {
    await removeMember(deps.db, req.member!.workspaceId, parseUserId(req.params.userId));
    res.status(204).end();
  });

  return router;
}
