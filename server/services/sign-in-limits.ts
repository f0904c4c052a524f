// Sign-in guessing limits (issue 6). Failures are counted per (address, client IP), so a guesser
// elsewhere cannot lock the real user out, and per client IP across all addresses, so one client cannot
// try many addresses either. Reaching a limit locks that key for a short time that doubles with each
// further lock-out (up to a cap); a successful sign-in clears its (address, IP) counter. Counters live in
// PostgreSQL (`sign_in_limits`) so every server process on the database shares them.
//
// The client IP is Express's `req.ip`: the socket's address unless `trust proxy` is set
// (BLEEDWRIGHT_TRUST_PROXY=1, one proxy hop), so a client cannot pick its own IP with a header.
import { createHash } from 'node:crypto';
import { isIPv4, isIPv6 } from 'node:net';
import type { Knex } from 'knex';
import { AppError } from '../errors.ts';
import { deleteCounter, findCounters, pruneCounters, updateCounter, type SignInCounter } from '../db/sign-in-limits.ts';

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

/** A key with no failure for this long starts again from nothing (its lock-outs no longer grow). */
export const COUNTER_IDLE_MS = 24 * 60 * MINUTE;

/**
 * The part of a client address that identifies one client: an IPv4 address as it is (also when the
 * socket shows it IPv4-mapped), an IPv6 address by its /64 network, which one home or server usually
 * holds whole (RFC 6177 assigns end sites /56 or /48, so per-address counting would be trivially dodged).
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

/** A counter after one more failure at `now` under `rule`. */
export function afterFailure(row: SignInCounter, rule: LimitRule, now: Date): SignInCounter {
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

/** 429 with Retry-After (seconds) while the (address, IP) or the IP is locked out. */
export async function assertSignInAllowed(db: Knex, email: string, ip: string | undefined, now: Date): Promise<void> {
  const k = signInKeys(email, ip);
  const rows = await findCounters(db, [k.addressAndIp, k.ip]);
  let waitMs = 0;
  for (const r of rows) if (r.locked_until) waitMs = Math.max(waitMs, r.locked_until.getTime() - now.getTime());
  if (waitMs <= 0) return;
  const waitSeconds = Math.ceil(waitMs / 1000);
  const minutes = Math.ceil(waitSeconds / 60);
  const byIp = rows.some((r) => r.key === k.ip && r.locked_until && r.locked_until.getTime() - now.getTime() === waitMs);
  throw new AppError(
    429,
    'TOO_MANY_ATTEMPTS',
    `Too many failed sign-ins ${byIp ? 'from this network' : 'for this address from this network'}; wait ${minutes} minute${minutes === 1 ? '' : 's'} and try again.`,
    { 'Retry-After': String(waitSeconds) },
  );
}

export async function recordSignInFailure(db: Knex, email: string, ip: string | undefined, now: Date, limits: SignInLimits = SIGN_IN_LIMITS): Promise<void> {
  const k = signInKeys(email, ip);
  await updateCounter(db, k.addressAndIp, now, (row) => afterFailure(row, limits.addressAndIp, now));
  await updateCounter(db, k.ip, now, (row) => afterFailure(row, limits.ip, now));
  await pruneCounters(db, new Date(now.getTime() - COUNTER_IDLE_MS));
}

/** The right password from this client: its (address, IP) counter starts again; the IP counter stays. */
export async function recordSignInSuccess(db: Knex, email: string, ip: string | undefined): Promise<void> {
  await deleteCounter(db, signInKeys(email, ip).addressAndIp);
}
