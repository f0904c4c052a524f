import { timingSafeEqual } from 'node:crypto';
import type { RequestHandler } from 'express';
import type { Knex } from 'knex';
import { z } from 'zod';
import { AppError, forbidden, notFound, unauthenticated } from '../errors.ts';
import { findMembership } from '../db/memberships.ts';
import { findUserById, toPublicUser, type PublicUser } from '../db/users.ts';
import type { Role } from '../roles.ts';
import { authenticateApiToken, type TokenIdentity } from '../services/tokens.ts';

declare module 'express-session' {
  interface SessionData {
    userId?: string;
    csrfToken?: string;
  }
}

declare global {
  // eslint-disable-next-line @typescript-eslint/no-namespace
  namespace Express {
    interface Request {
      user?: PublicUser;
      member?: { workspaceId: string; userId: string; role: Role };
      /** Set when the request came with `Authorization: Bearer bw_...` (no session, no cookie, no CSRF). */
      apiToken?: TokenIdentity;
    }
  }
}

const SAFE_METHODS = new Set(['GET', 'HEAD', 'OPTIONS']);

/**
 * Every write must carry the per-session token from GET /api/session in X-CSRF-Token. A page on
 * another site can make the browser send our cookie, but cannot read the token.
 */
export const csrfProtection: RequestHandler = (req, _res, next) => {
  // A bearer token is not sent by the browser on its own, so a forged cross-site request cannot carry it.
  if (SAFE_METHODS.has(req.method) || req.apiToken) return next();
  const expected = req.session?.csrfToken;
  const sent = req.get('x-csrf-token');
  if (!expected || !sent || sent.length !== expected.length || !timingSafeEqual(Buffer.from(sent), Buffer.from(expected))) {
    return next(new AppError(403, 'CSRF', 'The page’s security token is missing or out of date: reload the page and try again.'));
  }
  next();
};

/** Loads the signed-in account into req.user; 401 when there is none. */
export function requireUser(db: Knex): RequestHandler {
  return async (req, _res, next) => {
    const userId = req.apiToken?.userId ?? req.session?.userId;
    if (!userId) return next(unauthenticated());
    const row = await findUserById(db, userId);
    if (!row) return next(unauthenticated());
    req.user = toPublicUser(row);
    next();
  };
}

const uuid = z.uuid();

/**
 * Needs a signed-in member of :workspaceId holding one of `roles`. A workspace the account is not a
 * member of answers 404, as if it did not exist; a member with too small a role gets 403.
 */
export function requireMember(db: Knex, roles: readonly Role[]): RequestHandler {
  const check = requireUser(db);
  return (req, res, next) => {
    check(req, res, async (err?: unknown) => {
      if (err) return next(err);
      const workspaceId = String(req.params.workspaceId ?? '');
      if (!uuid.safeParse(workspaceId).success) return next(notFound('That workspace'));
      if (req.apiToken && req.apiToken.workspaceId !== workspaceId) return next(notFound('That workspace'));
      const membership = await findMembership(db, workspaceId, req.user!.id);
      if (!membership) return next(notFound('That workspace'));
      if (!roles.includes(membership.role)) return next(forbidden());
      req.member = { workspaceId, userId: req.user!.id, role: membership.role };
      next();
    });
  };
}

export const ANY_ROLE: readonly Role[] = ['owner', 'maker', 'helper'];
export const OWNER: readonly Role[] = ['owner'];

const BEARER = /^Bearer\s+(\S+)$/i;
/** Paths (inside /api) a token may reach besides its own workspace's routes. */
const TOKEN_OPEN_PATHS = new Set(['/health', '/openapi.json']);

/**
 * `Authorization: Bearer bw_...`: authenticates the request as the token's member in the token's
 * workspace (role re-read from memberships every time). Such requests reach only that workspace's routes
 * (not its token routes: a token cannot make tokens) plus health and the OpenAPI document.
 */
export function bearerAuth(db: Knex, clock: () => Date): RequestHandler {
  return async (req, _res, next) => {
    const header = req.get('authorization');
    if (!header) return next();
    const match = BEARER.exec(header.trim());
    if (!match) return next(new AppError(401, 'TOKEN_INVALID', 'The Authorization header must be "Bearer <token>".'));
    const identity = await authenticateApiToken(db, match[1]!, clock());
    if (!identity) return next(new AppError(401, 'TOKEN_INVALID', 'This API token is unknown, was revoked, or its member left the workspace.'));
    const inWorkspace = req.path === `/workspaces/${identity.workspaceId}` || req.path.startsWith(`/workspaces/${identity.workspaceId}/`);
    const tokenRoutes = req.path.startsWith(`/workspaces/${identity.workspaceId}/tokens`);
    if ((!inWorkspace && !TOKEN_OPEN_PATHS.has(req.path)) || tokenRoutes) {
      return next(new AppError(403, 'TOKEN_SCOPE', 'API tokens reach only their own workspace\u2019s files, recipes and runs; sign in to do this.'));
    }
    req.apiToken = identity;
    next();
  };
}
