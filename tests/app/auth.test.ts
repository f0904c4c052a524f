import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { AddressInfo } from 'node:net';
import { createServer } from 'node:http';
import { createApp } from '../../server/app.ts';
import type { RunningServer } from '../../server/server.ts';
import type { SignInCounter } from '../../server/db/sign-in-limits.ts';
import { COUNTER_IDLE_MS, SIGN_IN_LIMITS, afterAttempt, clientKey, takeBack } from '../../server/services/sign-in-limits.ts';
import { Actor, TEST_PASSWORD, createUser, startTestServer } from './fixtures.ts';
import { IpClient, loopbackIp } from './ip-client.ts';

let server: RunningServer;
let email: string;

beforeAll(async () => {
  server = await startTestServer();
  email = (await createUser(server.deps.db, 'auth')).email;
});
afterAll(() => server?.close());

describe('sign-in and sessions', () => {
  it('signs in, shows the account, and sets an httpOnly SameSite=Lax cookie', async () => {
    const actor = await Actor.anonymous(server.url);
    const res = await actor.request('POST', '/api/session', { email: email.toUpperCase(), password: TEST_PASSWORD });
    expect(res.status).toBe(200);
    expect(res.body.user.email).toBe(email);
    const cookie = res.headers.getSetCookie().find((c) => c.startsWith('bw.sid='))!;
    expect(cookie).toMatch(/HttpOnly/);
    expect(cookie).toMatch(/SameSite=Lax/);
    expect((await actor.get('/api/session')).body.user.email).toBe(email);
    expect((await actor.get('/api/workspaces')).status).toBe(200);
  });

  it('stores the password as argon2id with the OWASP parameters', async () => {
    // OWASP Password Storage cheat sheet: argon2id, m=19456 KiB, t=2, p=1.
    const row = await server.deps.db('users').where({ email }).first();
    expect(row.password_hash).toMatch(/^\$argon2id\$v=19\$m=19456,t=2,p=1\$/);
  });

  it('answers a bad password and an unknown address alike with 401', async () => {
    const actor = await Actor.anonymous(server.url);
    const wrong = await actor.post('/api/session', { email, password: 'not-the-password' });
    const unknown = await actor.post('/api/session', { email: 'nobody-here@example.test', password: 'whatever-123' });
    expect(wrong.status).toBe(401);
    expect(unknown.status).toBe(401);
    expect(wrong.body.error.code).toBe('BAD_CREDENTIALS');
    expect(unknown.body).toEqual(wrong.body);
    expect((await actor.get('/api/session')).body.user).toBeNull();
  });

  it('ends the session at sign-out: the old cookie is no longer signed in', async () => {
    const actor = await Actor.signedIn(server.url, email);
    const oldCookie = actor.cookie;
    expect((await actor.delete('/api/session')).status).toBe(204);
    const again = await actor.request('GET', '/api/workspaces', undefined, { cookie: oldCookie });
    expect(again.status).toBe(401);
    expect(again.body.error.code).toBe('UNAUTHENTICATED');
    const { count } = (await server.deps.db('sessions').where({ sid: sidOf(oldCookie!) }).count('* as count').first()) as { count: string };
    expect(Number(count)).toBe(0);
  });

  it('gives a new session id at sign-in (no session fixation)', async () => {
    const actor = await Actor.anonymous(server.url);
    const before = actor.cookie!;
    expect(before).toBeTruthy();
    await actor.post('/api/session', { email, password: TEST_PASSWORD });
    expect(actor.cookie).not.toBe(before);
    expect(sidOf(actor.cookie!)).not.toBe(sidOf(before));
    // The pre-sign-in id is not signed in afterwards.
    const fixed = await actor.request('GET', '/api/session', undefined, { cookie: before });
    expect(fixed.body?.user ?? null).toBeNull();
    expect((await actor.request('GET', '/api/workspaces', undefined, { cookie: before })).status).toBe(401);
  });

  it('rejects a cookie-authenticated write without the CSRF token', async () => {
    const actor = await Actor.signedIn(server.url, email);
    const none = await actor.request('DELETE', '/api/session', undefined, { csrf: false });
    expect(none.status).toBe(403);
    expect(none.body.error.code).toBe('CSRF');
    const saved = actor.csrfToken;
    actor.csrfToken = 'x'.repeat(saved!.length);
    expect((await actor.delete('/api/session')).status).toBe(403);
    actor.csrfToken = saved;
    expect((await actor.get('/api/session')).body.user.email).toBe(email);
  });

  it('reports validation errors with the field path', async () => {
    const actor = await Actor.anonymous(server.url);
    const res = await actor.post('/api/session', { email: 'not-an-address', password: 'x' });
    expect(res.status).toBe(400);
    expect(res.body.error.code).toBe('VALIDATION');
    expect(res.body.error.message).toMatch(/^email: /);
  });

  it('echoes the request id and answers unknown API routes with a JSON 404', async () => {
    const res = await fetch(`${server.url}/api/nothing-here`, { headers: { 'X-Request-Id': 'req-abc-123' } });
    expect(res.status).toBe(404);
    expect(res.headers.get('x-request-id')).toBe('req-abc-123');
    expect((await res.json()).error.code).toBe('NOT_FOUND');
    const csp = res.headers.get('content-security-policy')!;
    expect(csp).toContain("default-src 'self'");
    expect(csp).not.toMatch(/https?:/);
  });

  it('reports database and queue health', async () => {
    const res = await fetch(`${server.url}/api/health`);
    expect(res.status).toBe(200);
    expect(await res.json()).toEqual({ database: 'ok', queue: 'ok' });
  });
});

describe('health when a part is down', () => {
  it('answers 503 and names the queue when pg-boss does not answer', async () => {
    const http = createServer(createApp({ ...server.deps, queue: { healthy: async () => false } }));
    await new Promise<void>((r) => http.listen(0, '127.0.0.1', r));
    try {
      const res = await fetch(`http://127.0.0.1:${(http.address() as AddressInfo).port}/api/health`);
      expect(res.status).toBe(503);
      expect(await res.json()).toEqual({ database: 'ok', queue: 'down' });
    } finally {
      http.close();
    }
  });
});

describe('guessing passwords', () => {
  it('slows down after 10 failed sign-ins for one address from one client with 429, and keeps the counters in PostgreSQL', async () => {
    const target = (await createUser(server.deps.db, 'guessed')).email;
    const guesser = await IpClient.open(server.url, loopbackIp());
    for (let i = 0; i < 10; i++) expect((await guesser.signIn(target, `guess-${i}`)).status).toBe(401);
    const blocked = await guesser.signIn(target, TEST_PASSWORD);
    expect(blocked.status).toBe(429);
    expect(blocked.body.error.code).toBe('TOO_MANY_ATTEMPTS');
    // One row per (address, IP) and one per IP, keyed by sha256: no typed address kept in clear.
    const rows = await server.deps.db('sign_in_limits').whereNotNull('locked_until').where('updated_at', '>', new Date(Date.now() - 60_000));
    expect(rows.length).toBeGreaterThanOrEqual(1);
    for (const r of rows) expect(r.key).toMatch(/^[0-9a-f]{64}$/);
  });
});

describe('sign-in limit rules', () => {
  const rule = SIGN_IN_LIMITS.addressAndIp;
  const t0 = new Date('2026-01-01T00:00:00Z');
  const at = (ms: number) => new Date(t0.getTime() + ms);
  const fresh: SignInCounter = { failures: 0, window_start: t0, locked_until: null, lockouts: 0, updated_at: t0 };

  it('locks after maxFailures in the window, each further lock-out twice as long up to the cap', () => {
    let c = fresh;
    const locks: number[] = [];
    let t = 0;
    for (let round = 0; round < 6; round++) {
      for (let i = 0; i < rule.maxFailures; i++) c = afterAttempt(c, rule, at(++t));
      expect(c.locked_until).not.toBeNull();
      locks.push(c.locked_until!.getTime() - at(t).getTime());
      t = c.locked_until!.getTime() - t0.getTime();
    }
    expect(locks).toEqual([1, 2, 4, 8, 15, 15].map((m) => m * 60_000));
  });

  it('forgets failures older than the window, and lock-out growth after a day without failures', () => {
    let c = fresh;
    for (let i = 0; i < rule.maxFailures - 1; i++) c = afterAttempt(c, rule, at(i));
    c = afterAttempt(c, rule, at(rule.windowMs + 10));
    expect(c.failures).toBe(1);
    expect(c.locked_until).toBeNull();
    const grown = { ...fresh, lockouts: 3, updated_at: t0 };
    let d = grown;
    for (let i = 0; i < rule.maxFailures; i++) d = afterAttempt(d, rule, at(COUNTER_IDLE_MS + i));
    expect(d.locked_until!.getTime() - at(COUNTER_IDLE_MS + rule.maxFailures - 1).getTime()).toBe(rule.lockMs);
  });

  it('a successful attempt takes its count back, and undoes the lock-out it set', () => {
    const before = { ...fresh, failures: rule.maxFailures - 1 };
    const locking = afterAttempt(before, rule, at(1));
    expect(locking.locked_until).not.toBeNull();
    expect(takeBack(locking, before, locking)).toEqual(before);
    const counted = afterAttempt(fresh, rule, at(1));
    expect(takeBack(afterAttempt(counted, rule, at(2)), fresh, counted).failures).toBe(1);
    // A new window since: nothing of this attempt is left to take back.
    const later = afterAttempt(counted, rule, at(rule.windowMs + 5));
    expect(takeBack(later, fresh, counted)).toEqual(later);
  });

  it('counts a client by its IPv4 address, or its IPv6 /64 network', () => {
    expect(clientKey('::ffff:192.0.2.7')).toBe('192.0.2.7');
    expect(clientKey('192.0.2.7')).toBe('192.0.2.7');
    expect(clientKey('2001:db8:1:2:aaaa::1')).toBe('2001:db8:1:2::/64');
    expect(clientKey('2001:0db8:0001:0002:ffff:1:2:3')).toBe('2001:db8:1:2::/64');
    expect(clientKey('2001:db8::1')).toBe('2001:db8:0:0::/64');
    expect(clientKey('::1')).toBe('0:0:0:0::/64');
    expect(clientKey(undefined)).toBe('unknown');
  });
});

function sidOf(cookie: string): string {
  // bw.sid=s%3A<sid>.<signature>
  return decodeURIComponent(cookie.split('=')[1]).slice(2).split('.')[0];
}
