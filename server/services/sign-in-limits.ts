// Sign-in guessing limits (issue 6). Failures are counted per (address, client IP), so a guesser
// elsewhere cannot lock the real user out, and per client IP across all addresses, so one client cannot
// try many addresses either. Reaching a limit locks that key for a short time that doubles with each
// further lock-out (up to a cap). Counters live in PostgreSQL (`sign_in_limits`) so every server process
// on the database shares them.
//
// Each attempt is counted *before* its password is checked (under a row lock), and a right password
// takes its count back: so many guesses sent at once cannot all slip past the check before the first of
// them is counted.
//
// The client IP is Express's `req.ip`: the socket's address unless `trust proxy` is set
// (BLEEDWRIGHT_TRUST_PROXY=1, one proxy hop), so a client cannot pick its own IP with a header.
import { createHash } from 'node:crypto';
import { isIPv4, isIPv6 } from 'node:net';
import type { Knex } from 'knex';
import { AppError } from '../errors.ts';
import { deleteCounter, pruneCounters, updateCounters, type SignInCounter } from '../db/sign-in-limits.ts';

export interface LimitRule {
  /** Failures within `windowMs` that start a lock-out. */
  maxFailures: number;
  windowMs: number;
  /** The first lock-out; each further one doubles, up to `maxLockMs`. */
  lockMs: number;
  maxLockMs: number;
}

export interface SignInLimits {
  addressAndIp: LimitRule;
  ip: LimitRule;
}

const MINUTE = 60_000;
export const SIGN_IN_LIMITS: SignInLimits = {
  addressAndIp: { maxFailures: 10, windowMs: 15 * MINUTE, lockMs: 1 * MINUTE, maxLockMs: 15 * MINUTE },
  ip: { maxFailures: 50, windowMs: 15 * MINUTE, lockMs: 5 * MINUTE, maxLockMs: 60 * MINUTE },
};

/** A key with no attempt for this long starts again from nothing (its lock-outs no longer grow). */
export const COUNTER_IDLE_MS = 24 * 60 * MINUTE;

/**
 * The part of a client address that identifies one client: an IPv4 address as it is (also when the
 * socket shows it IPv4-mapped), an IPv6 address by its /64 network: an end site holds at least a whole
 * /64 (RFC 6177), so counting single IPv6 addresses would be dodged by changing the last 64 bits.
 */
export function clientKey(ip: string | undefined): string {
  if (!ip) return 'unknown';
  const mapped = /^::ffff:(\d{1,3}(?:\.\d{1,3}){3})$/i.exec(ip);
  if (mapped) return mapped[1]!;
  if (isIPv4(ip)) return ip;
  if (!isIPv6(ip)) return ip;
  const [head = '', tail] = ip.split('%')[0]!.split('::');
  const groups = (part: string) => (part ? part.split(':').flatMap((g) => (g.includes('.') ? ['0', '0'] : [g])) : []);
  const h = groups(head);
  const t = tail === undefined ? [] : groups(tail);
  const full = [...h, ...Array(8 - h.length - t.length).fill('0'), ...t];
  return `${full.slice(0, 4).map((g) => parseInt(g, 16).toString(16)).join(':')}::/64`;
}

const hash = (s: string) => createHash('sha256').update(s).digest('hex');
/** The counter keys of one attempt: sha256 of (address, client) and of the client alone. */
export const signInKeys = (email: string, ip: string | undefined) => {
  const client = clientKey(ip);
  return { addressAndIp: hash(`address-ip\n${email.toLowerCase()}\n${client}`), ip: hash(`ip\n${client}`) };
};

/** A counter after one more attempt at `now` under `rule` (counted as a failure until it succeeds). */
export function afterAttempt(row: SignInCounter, rule: LimitRule, now: Date): SignInCounter {
  const t = now.getTime();
  const idle = t - row.updated_at.getTime() >= COUNTER_IDLE_MS;
  const lockouts = idle ? 0 : row.lockouts;
  const inWindow = !idle && t - row.window_start.getTime() < rule.windowMs;
  const failures = (inWindow ? row.failures : 0) + 1;
  if (failures < rule.maxFailures) {
    return { failures, window_start: inWindow ? row.window_start : now, locked_until: row.locked_until, lockouts, updated_at: now };
  }
  const lockMs = Math.min(rule.lockMs * 2 ** lockouts, rule.maxLockMs);
  return { failures: 0, window_start: now, locked_until: new Date(t + lockMs), lockouts: lockouts + 1, updated_at: now };
}

/**
 * The counter `now` holds once a successful attempt takes its count back; `before` and `after` are the
 * counter around that attempt. An attempt that set a lock-out undoes it (every attempt since was refused,
 * so `before` is still the truth); otherwise one failure less in the same window.
 */
export function takeBack(now: SignInCounter, before: SignInCounter, after: SignInCounter): SignInCounter {
  const setLock = after.locked_until !== null && after.locked_until.getTime() !== before.locked_until?.getTime();
  if (setLock && now.locked_until?.getTime() === after.locked_until!.getTime()) return before;
  if (!setLock && now.window_start.getTime() === after.window_start.getTime() && now.failures > 0) return { ...now, failures: now.failures - 1 };
  return now;
}

const lockLeft = (row: SignInCounter, now: Date) => (row.locked_until ? row.locked_until.getTime() - now.getTime() : 0);

export interface SignInTicket {
  keys: ReturnType<typeof signInKeys>;
  ipBefore: SignInCounter;
  ipAfter: SignInCounter;
}

/**
 * Counts a sign-in attempt against the (address, IP) and the IP limits, or answers 429 with Retry-After
 * (seconds) while either is locked out. Returns what `signInSucceeded` needs to take the count back.
 */
export async function beginSignInAttempt(db: Knex, email: string, ip: string | undefined, now: Date, limits: SignInLimits = SIGN_IN_LIMITS): Promise<SignInTicket> {
  const keys = signInKeys(email, ip);
  let refused: { waitMs: number; byIp: boolean } | null = null;
  let ticket: SignInTicket | null = null;
  await updateCounters(db, [keys.addressAndIp, keys.ip], now, ([address, client]) => {
    const waitMs = Math.max(lockLeft(address!, now), lockLeft(client!, now));
    if (waitMs > 0) {
      refused = { waitMs, byIp: lockLeft(client!, now) === waitMs };
      return [address!, client!];
    }
    ticket = { keys, ipBefore: client!, ipAfter: afterAttempt(client!, limits.ip, now) };
    return [afterAttempt(address!, limits.addressAndIp, now), ticket.ipAfter];
  });
  await pruneCounters(db, new Date(now.getTime() - COUNTER_IDLE_MS));
  if (refused) throw tooManyAttempts(refused);
  return ticket!;
}

function tooManyAttempts({ waitMs, byIp }: { waitMs: number; byIp: boolean }): AppError {
  const waitSeconds = Math.ceil(waitMs / 1000);
  const minutes = Math.ceil(waitSeconds / 60);
  return new AppError(
    429,
    'TOO_MANY_ATTEMPTS',
    `Too many failed sign-ins ${byIp ? 'from this network' : 'for this address from this network'}; wait ${minutes} minute${minutes === 1 ? '' : 's'} and try again.`,
    { 'Retry-After': String(waitSeconds) },
  );
}

/** The right password: the (address, IP) counter starts again, and the IP counter takes this attempt back. */
export async function signInSucceeded(db: Knex, ticket: SignInTicket, now: Date): Promise<void> {
  await deleteCounter(db, ticket.keys.addressAndIp);
  await updateCounters(db, [ticket.keys.ip], now, ([row]) => [takeBack(row!, ticket.ipBefore, ticket.ipAfter)]);
}
