import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { AddressInfo } from 'node:net';
import { createServer } from 'node:http';
import { createApp } from '../../server/app.ts';
import type { RunningServer } from '../../server/server.ts';
import { Actor, TEST_PASSWORD, createUser, startTestServer } from './fixtures.ts';

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
  it('slows down after 10 failed sign-ins for one address with 429', async () => {
    const target = (await createUser(server.deps.db, 'guessed')).email;
    const actor = await Actor.anonymous(server.url);
    for (let i = 0; i < 10; i++) expect((await actor.post('/api/session', { email: target, password: `guess-${i}` })).status).toBe(401);
    const blocked = await actor.post('/api/session', { email: target, password: TEST_PASSWORD });
    expect(blocked.status).toBe(429);
    expect(blocked.body.error.code).toBe('TOO_MANY_ATTEMPTS');
  });
});

function sidOf(cookie: string): string {
  // bw.sid=s%3A<sid>.<signature>
  return decodeURIComponent(cookie.split('=')[1]).slice(2).split('.')[0];
}
