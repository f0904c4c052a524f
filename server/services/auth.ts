import type { Knex } from 'knex';
import { AppError } from '../errors.ts';
import { dummyVerify, verifyPassword } from '../passwords.ts';
import { findUserByEmail, toPublicUser, type PublicUser } from '../db/users.ts';

export const badCredentials = () =>
  new AppError(401, 'BAD_CREDENTIALS', 'That e-mail address and password do not match an account.');

// Failed sign-ins per e-mail address, kept in memory: enough to slow down guessing on one server.
export const SIGN_IN_MAX_FAILURES = 10;
export const SIGN_IN_WINDOW_MS = 15 * 60 * 1000;
const failures = new Map<string, { count: number; since: number }>();

function checkRateLimit(email: string, now: number): void {
  const entry = failures.get(email);
  if (entry && now - entry.since < SIGN_IN_WINDOW_MS && entry.count >= SIGN_IN_MAX_FAILURES) {
    // The lock ends with the window that began at the first failure, so the real user waits at most 15 minutes.
    const waitSeconds = Math.max(1, Math.ceil((entry.since + SIGN_IN_WINDOW_MS - now) / 1000));
    const minutes = Math.ceil(waitSeconds / 60);
    throw new AppError(
      429,
      'TOO_MANY_ATTEMPTS',
      `Too many failed sign-ins for this address; wait ${minutes} minute${minutes === 1 ? '' : 's'} and try again.`,
      { 'Retry-After': String(waitSeconds) },
    );
  }
}

// Guessing across many made-up addresses must not grow the map without end: old windows are dropped.
const MAX_TRACKED = 10_000;

function recordFailure(email: string, now: number): void {
  if (failures.size >= MAX_TRACKED) {
    for (const [key, e] of failures) if (now - e.since >= SIGN_IN_WINDOW_MS) failures.delete(key);
  }
  const entry = failures.get(email);
  if (!entry || now - entry.since >= SIGN_IN_WINDOW_MS) failures.set(email, { count: 1, since: now });
  else entry.count++;
}

/** Checks an e-mail and password; the same error for an unknown address and a wrong password. */
export async function authenticate(db: Knex, email: string, password: string, now: Date): Promise<PublicUser> {
  const key = email.toLowerCase();
  checkRateLimit(key, now.getTime());
  const user = await findUserByEmail(db, email);
  const ok = user ? await verifyPassword(user.password_hash, password) : await dummyVerify(password);
  if (!user || !ok) {
    recordFailure(key, now.getTime());
    throw badCredentials();
  }
  failures.delete(key);
  return toPublicUser(user);
}
