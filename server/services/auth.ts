import type { Knex } from 'knex';
import { AppError } from '../errors.ts';
import { dummyVerify, verifyPassword } from '../passwords.ts';
import { findUserByEmail, toPublicUser, type PublicUser } from '../db/users.ts';
import { beginSignInAttempt, signInSucceeded, type SignInLimits } from './sign-in-limits.ts';

export const badCredentials = () =>
  new AppError(401, 'BAD_CREDENTIALS', 'That e-mail address and password do not match an account.');

export interface SignInAttempt {
  email: string;
  password: string;
  /** The client's IP as Express sees it (`req.ip`). */
  ip: string | undefined;
  now: Date;
  limits?: SignInLimits;
}

/**
 * Checks an e-mail and password; the same error for an unknown address and a wrong password. A client
 * locked out by the sign-in limits gets 429 before any password is checked.
 */
export async function authenticate(db: Knex, attempt: SignInAttempt): Promise<PublicUser> {
  const { email, password, ip, now } = attempt;
  // Counted before the password is checked; a right password takes the count back.
  const ticket = await beginSignInAttempt(db, email, ip, now, attempt.limits);
  const user = await findUserByEmail(db, email);
  const ok = user ? await verifyPassword(user.password_hash, password) : await dummyVerify(password);
  if (!user || !ok) throw badCredentials();
  await signInSucceeded(db, ticket, now);
  return toPublicUser(user);
}
