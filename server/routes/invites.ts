import { Router } from 'express';
import { z } from 'zod';
import type { AppDeps } from '../context.ts';
import { notFound } from '../errors.ts';
import { OWNER, requireMember } from '../middleware/auth.ts';
import { acceptInvite, cancelInvite, inviteByEmail, listInvites, previewInvite } from '../services/invites.ts';
import { signInSession } from './session.ts';
import { acceptInviteSchema, createInviteSchema, type InvitePreviewResponse, type PendingInvite } from './workspaces.schema.ts';

const inviteIdParam = z.uuid();

/** Mounted at /api/workspaces/:workspaceId/invites (owners only). */
export function workspaceInviteRoutes(deps: AppDeps): Router {
  const router = Router({ mergeParams: true });

  router.get('/', requireMember(deps.db, OWNER), async (req, res) => {
    const body: PendingInvite[] = await listInvites(deps, req.member!.workspaceId);
    res.json(body);
  });

  router.post('/', requireMember(deps.db, OWNER), async (req, res) => {
    const input = createInviteSchema.parse(req.body);
    const invite = await inviteByEmail(deps, { ...input, workspaceId: req.member!.workspaceId, inviterId: req.member!.userId });
    req.log.info({ inviteId: invite.id, workspaceId: req.member!.workspaceId }, 'invite sent');
    res.status(201).json(invite satisfies PendingInvite);
  });

  router.delete('/:inviteId', requireMember(deps.db, OWNER), async (req, res) => {
    const parsed = inviteIdParam.safeParse(req.params.inviteId);
    if (!parsed.success) throw notFound('That invitation');
    await cancelInvite(deps, req.member!.workspaceId, parsed.data);
    res.status(204).end();
  });

  return router;
}

/** Mounted at /api/invites: the accept link works for people without an account yet. */
export function publicInviteRoutes(deps: AppDeps): Router {
  const router = Router();

  router.get('/:token', async (req, res) => {
    const body: InvitePreviewResponse = await previewInvite(deps, String(req.params.token));
    res.json(body);
  });

  router.post('/:token/accept', async (req, res) => {
    const input = acceptInviteSchema.parse(req.body ?? {});
    const newAccount = input.password ? { name: input.name ?? '', password: input.password } : undefined;
    if (newAccount && !newAccount.name) newAccount.name = 'New member';
    const result = await acceptInvite(deps, String(req.params.token), { sessionUserId: req.session.userId, newAccount });
    const csrfToken = result.created ? await signInSession(req, result.user) : req.session.csrfToken;
    res.json({ workspaceId: result.workspaceId, user: result.user, csrfToken });
  });

  return router;
}
