import { randomBytes } from 'node:crypto';
import { Router, type Request } from 'express';
import type { AppDeps } from '../context.ts';
import { findUserById, toPublicUser, type PublicUser } from '../db/users.ts';
import { authenticate } from '../services/auth.ts';
import { signInSchema, type SessionResponse } from './session.schema.ts';

export const SESSION_COOKIE = 'bw.sid';

const newCsrfToken = () => randomBytes(24).toString('base64url');

/** Swaps the session for a new id before putting an account in it (no session fixation). */
export async function signInSession(req: Request, user: PublicUser): Promise<string> {
  await new Promise<void>((resolve, reject) => req.session.regenerate((err) => (err ? reject(err) : resolve())));
  req.session.userId = user.id;
  req.session.csrfToken = newCsrfToken();
  await new Promise<void>((resolve, reject) => req.session.save((err) => (err ? reject(err) : resolve())));
  return req.session.csrfToken;
}

export function sessionRoutes(deps: AppDeps): Router {
  const router = Router();

  // Who is signed in, and the CSRF token every write must send back.
  router.get('/', async (req, res) => {
    req.session.csrfToken ??= newCsrfToken();
    const row = req.session.userId ? await findUserById(deps.db, req.session.userId) : undefined;
    const body: SessionResponse = { user: row ? toPublicUser(row) : null, csrfToken: req.session.csrfToken };
    res.json(body);
  });

  router.post('/', async (req, res) => {
    const { email, password } = signInSchema.parse(req.body);
    const user = await authenticate(deps.db, { email, password, ip: req.ip, now: deps.clock(), limits: deps.config.signInLimits });
    const csrfToken = await signInSession(req, user);
    req.log.info({ userId: user.id }, 'signed in');
    const body: SessionResponse = { user, csrfToken };
    res.json(body);
  });

  router.delete('/', async (req, res) => {
    await new Promise<void>((resolve, reject) => req.session.destroy((err) => (err ? reject(err) : resolve())));
    res.clearCookie(SESSION_COOKIE, { path: '/' });
    res.status(204).end();
  });

  return router;
}
