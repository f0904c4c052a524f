// Access hardening (issue 6): CSRF on every cookie-authenticated write (enumerated from the app's
// routers), a removed member's session stops working at once, sign-in guessing gets 429 with
// Retry-After per (address, client IP) and per client IP while the real user elsewhere still signs in,
// tampered share links are refused, and
// the security headers are on every page, HTML and API alike.
import { createServer, type Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import { randomUUID } from 'node:crypto';
import { existsSync } from 'node:fs';
import { resolve } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createApp } from '../../server/app.ts';
import type { AppDeps } from '../../server/context.ts';
import { upsertMembership } from '../../server/db/memberships.ts';
import type { RunningServer } from '../../server/server.ts';
import { SIGN_IN_LIMITS, signInKeys } from '../../server/services/sign-in-limits.ts';
import { listApiRoutes, type ApiRoute } from './access-table.ts';
import { Actor, TEST_PASSWORD, createUser, createWorkspaceFixture, startTestServer, uniqueEmail, type WorkspaceFixture } from './fixtures.ts';
import { IpClient, loopbackIp } from './ip-client.ts';
import { runFixture, shareFixture } from './runs-access.ts';

const CLIENT_DIR = resolve('dist');

let server: RunningServer;
let fx: WorkspaceFixture;
let routes: ApiRoute[];

beforeAll(async () => {
  server = await startTestServer({ clientDir: CLIENT_DIR });
  fx = await createWorkspaceFixture(server.deps.db, server.url);
  routes = listApiRoutes(createApp(server.deps));
});
afterAll(() => server?.close());

/** A concrete path for a route pattern: this workspace, made-up ids for everything else. */
function fill(route: ApiRoute): string {
  return route.path.replace(/:([A-Za-z]+)/g, (_m, name: string) => (name === 'workspaceId' ? fx.workspaceId : name === 'token' ? 'x'.repeat(32) : name === 'version' || name === 'revision' ? '1' : name === 'name' ? 'report.json' : randomUUID()));
}

/** The app on its own port with other deps (a clock to move), sharing the test server's database. */
async function appWith(overrides: Partial<AppDeps>): Promise<{ url: string; close: () => Promise<void> }> {
  const http: Server = createServer(createApp({ ...server.deps, ...overrides }));
  await new Promise<void>((r) => http.listen(0, '127.0.0.1', r));
  return {
    url: `http://127.0.0.1:${(http.address() as AddressInfo).port}`,
    close: () =>
      new Promise<void>((r) => {
        http.closeAllConnections();
        http.close(() => r());
      }),
  };
}

describe('CSRF', () => {
  it('refuses every cookie-authenticated write without the token, or with another session’s token, before any handler runs', async () => {
    const writes = routes.filter((r) => r.method !== 'GET');
    expect(writes.length).toBeGreaterThan(20);
    const owner = fx.actors.owner;
    const otherToken = fx.actors.maker.csrfToken!;
    for (const route of writes) {
      const path = fill(route);
      const none = await owner.request(route.method, path, {}, { csrf: false });
      expect(none.status, `${route.method} ${route.path}`).toBe(403);
      expect(none.body.error.code, `${route.method} ${route.path}`).toBe('CSRF');
      const saved = owner.csrfToken;
      owner.csrfToken = otherToken;
      const foreign = await owner.request(route.method, path, {});
      owner.csrfToken = saved;
      expect(foreign.status, `${route.method} ${route.path} with the maker's token`).toBe(403);
    }
    // Nothing was changed by any of them: the owner is still signed in and still the owner.
    expect((await owner.get(`/api/workspaces/${fx.workspaceId}/members`)).status).toBe(200);
  });
});

describe('objects of another workspace', () => {
  it('answer 404 to the owner of another workspace asking through their own workspace, for every kind of object', async () => {
    const ctx = { fx, server, db: server.deps.db };
    const db = server.deps.db;
    const { runId, cardId } = await runFixture(ctx);
    const share = await shareFixture(ctx);
    const run = await db('runs').where({ id: runId }).first();
    const recipeId = (await db('recipe_versions').where({ id: run.recipe_version_id }).first()).recipe_id;
    const artSetId = (await db('art_set_revisions').where({ id: run.art_set_revision_id }).first()).art_set_id;
    const sheetBody = { name: 'Foreign sheet', currency: 'EUR', tiers: [{ maxCards: 54, pricePerSet: 9 }], setupFee: 0, setupWaivedAtSets: 1, stocks: [] };
    const sheet = await fx.actors.owner.post(`/api/workspaces/${fx.workspaceId}/price-sheets`, sheetBody);
    expect(sheet.status).toBe(201);
    const theirs = `/api/workspaces/${fx.otherWorkspaceId}`;
    const tries: Array<[string, string, unknown?]> = [
      ['GET', `${theirs}/recipes/${recipeId}`],
      ['GET', `${theirs}/recipes/${recipeId}/versions/1`],
      ['PUT', `${theirs}/recipes/${recipeId}`, { settings: { name: 'Taken over' } }],
      ['POST', `${theirs}/recipes/${recipeId}/duplicate`, {}],
      ['POST', `${theirs}/recipes/${recipeId}/archive`, { archived: true }],
      ['GET', `${theirs}/art-sets/${artSetId}`],
      ['GET', `${theirs}/art-sets/${artSetId}/revisions/1/thumbnail?path=card-01.png`],
      ['POST', `${theirs}/runs`, { recipeId, artSetId }],
      ['GET', `${theirs}/runs/${runId}`],
      ['GET', `${theirs}/runs/${runId}/events`],
      ['GET', `${theirs}/runs/${runId}/cards`],
      ['GET', `${theirs}/runs/${runId}/cards/${cardId}/image?size=full`],
      ['GET', `${theirs}/runs/${runId}/files/report.json`],
      ['POST', `${theirs}/runs/${runId}/cancel`, {}],
      ['POST', `${theirs}/runs/${runId}/follow`, { follow: true }],
      ['GET', `${theirs}/runs/${share.runId}/shares`],
      ['POST', `${theirs}/runs/${runId}/shares`, { expiresInHours: 2 }],
      ['DELETE', `${theirs}/runs/${share.runId}/shares/${share.shareId}`],
      ['GET', `${theirs}/price-sheets/${sheet.body.priceSheet.id}`],
      ['PATCH', `${theirs}/price-sheets/${sheet.body.priceSheet.id}`, { ...sheetBody, name: 'Taken over' }],
      ['DELETE', `${theirs}/price-sheets/${sheet.body.priceSheet.id}`],
    ];
    for (const [method, path, body] of tries) {
      const res = await fx.actors.outsider.request(method, path, method === 'GET' ? undefined : body);
      expect(res.status, `${method} ${path}`).toBe(404);
    }
    // Nothing changed here.
    expect((await fx.actors.owner.get(`/api/workspaces/${fx.workspaceId}/recipes/${recipeId}`)).body.recipe.archived).toBe(false);
    expect((await fetch(`${server.url}/api/share/${share.token}`)).status).toBe(200);
    expect((await fx.actors.owner.get(`/api/workspaces/${fx.workspaceId}/price-sheets/${sheet.body.priceSheet.id}`)).status).toBe(200);
    expect((await db('runs').where({ workspace_id: fx.otherWorkspaceId })).length).toBe(0);
  });
});

describe('sessions follow membership at once', () => {
  it('a removed member’s open session loses the workspace on the next request; a demoted maker cannot write', async () => {
    const member = await createUser(server.deps.db, 'leaving');
    await upsertMembership(server.deps.db, fx.workspaceId, member.id, 'maker');
    const tab = await Actor.signedIn(server.url, member.email);
    expect((await tab.get(`/api/workspaces/${fx.workspaceId}/recipes`)).status).toBe(200);

    expect((await fx.actors.owner.patch(`/api/workspaces/${fx.workspaceId}/members/${member.id}`, { role: 'helper' })).status).toBe(204);
    const write = await tab.post(`/api/workspaces/${fx.workspaceId}/recipes`, { settings: { name: 'After demotion' } });
    expect(write.status).toBe(403);
    expect(write.body.error.code).toBe('FORBIDDEN');

    expect((await fx.actors.owner.delete(`/api/workspaces/${fx.workspaceId}/members/${member.id}`)).status).toBe(204);
    for (const path of [`/api/workspaces/${fx.workspaceId}`, `/api/workspaces/${fx.workspaceId}/recipes`, `/api/workspaces/${fx.workspaceId}/runs`]) {
      expect((await tab.get(path)).status, path).toBe(404);
    }
    expect((await tab.get('/api/workspaces')).body.map((w: { id: string }) => w.id)).not.toContain(fx.workspaceId);
  });

  it('a deleted account’s session is signed out at once', async () => {
    const gone = await createUser(server.deps.db, 'deleted');
    const tab = await Actor.signedIn(server.url, gone.email);
    expect((await tab.get('/api/workspaces')).status).toBe(200);
    await server.deps.db('users').where({ id: gone.id }).delete();
    expect((await tab.get('/api/workspaces')).status).toBe(401);
    expect((await tab.get('/api/session')).body.user).toBeNull();
  });
});

describe('sign-in limits', () => {
  const { addressAndIp, ip: perIp } = SIGN_IN_LIMITS;

  it('lock out one client for one address with 429 and Retry-After; the real user elsewhere still signs in; the lock ends and grows', async () => {
    let now = Date.now();
    const app = await appWith({ clock: () => new Date(now) });
    try {
      const target = (await createUser(server.deps.db, 'guarded')).email;
      const guesser = await IpClient.open(app.url, loopbackIp());
      for (let i = 0; i < addressAndIp.maxFailures; i++) expect((await guesser.signIn(target, `guess-${i}-x`)).status).toBe(401);
      // Locked: even the right password is not tried from there (any letter case of the address).
      const blocked = await guesser.signIn(target.toUpperCase(), TEST_PASSWORD);
      expect(blocked.status).toBe(429);
      expect(blocked.body.error.code).toBe('TOO_MANY_ATTEMPTS');
      // RFC 9110 10.2.3: Retry-After in seconds; the first lock-out lasts lockMs.
      expect(Number(blocked.headers['retry-after'])).toBe(addressAndIp.lockMs / 1000);
      // The real user on another address (network) is not locked out...
      const realUser = await IpClient.open(app.url, loopbackIp());
      const ok = await realUser.signIn(target, TEST_PASSWORD);
      expect(ok.status).toBe(200);
      expect(ok.body.user.email).toBe(target);
      // ...and the guesser's client can still sign in to another account (the per-IP limit is looser).
      const other = (await createUser(server.deps.db, 'neighbour')).email;
      expect((await (await IpClient.open(app.url, guesser.ip)).signIn(other, TEST_PASSWORD)).status).toBe(200);

      // Half a lock-out later still locked, with the rest of the time in Retry-After.
      now += addressAndIp.lockMs / 2;
      const half = await guesser.signIn(target, TEST_PASSWORD);
      expect(half.status).toBe(429);
      expect(Number(half.headers['retry-after'])).toBe(addressAndIp.lockMs / 2000);
      // Once it has passed, more guesses count again, and the next lock-out is twice as long.
      now += addressAndIp.lockMs / 2;
      for (let i = 0; i < addressAndIp.maxFailures; i++) expect((await guesser.signIn(target, `again-${i}-x`)).status).toBe(401);
      const second = await guesser.signIn(target, TEST_PASSWORD);
      expect(second.status).toBe(429);
      expect(Number(second.headers['retry-after'])).toBe((2 * addressAndIp.lockMs) / 1000);
      // After it, the right password from that same client signs in.
      now += 2 * addressAndIp.lockMs;
      expect((await guesser.signIn(target, TEST_PASSWORD)).status).toBe(200);
    } finally {
      await app.close();
    }
  });

  it('lock-out times are settings: a one-second lock-out ends in real time', async () => {
    const short = { ...SIGN_IN_LIMITS, addressAndIp: { maxFailures: 3, windowMs: 60_000, lockMs: 1_000, maxLockMs: 1_000 } };
    const app = await appWith({ config: { ...server.deps.config, signInLimits: short } });
    try {
      const target = (await createUser(server.deps.db, 'short-lock')).email;
      const client = await IpClient.open(app.url, loopbackIp());
      for (let i = 0; i < 3; i++) expect((await client.signIn(target, `guess-${i}-x`)).status).toBe(401);
      const blocked = await client.signIn(target, TEST_PASSWORD);
      expect(blocked.status).toBe(429);
      expect(blocked.headers['retry-after']).toBe('1');
      await new Promise((r) => setTimeout(r, 1_100));
      expect((await client.signIn(target, TEST_PASSWORD)).status).toBe(200);
    } finally {
      await app.close();
    }
  });

  it('lock out a client that tries many addresses, not the real user on another network', async () => {
    let now = Date.now();
    const app = await appWith({ clock: () => new Date(now) });
    try {
      const target = (await createUser(server.deps.db, 'sprayed')).email;
      const sprayer = await IpClient.open(app.url, loopbackIp());
      // Each made-up address fails once: no (address, IP) limit is reached, the per-IP one is.
      for (let i = 0; i < perIp.maxFailures; i++) expect((await sprayer.signIn(uniqueEmail(`spray${i}`), 'guess-x')).status).toBe(401);
      const blocked = await sprayer.signIn(target, TEST_PASSWORD);
      expect(blocked.status).toBe(429);
      expect(blocked.body.error.code).toBe('TOO_MANY_ATTEMPTS');
      expect(Number(blocked.headers['retry-after'])).toBe(perIp.lockMs / 1000);
      expect((await sprayer.signIn(uniqueEmail('fresh'), 'guess-x')).status).toBe(429);
      expect((await (await IpClient.open(app.url, loopbackIp())).signIn(target, TEST_PASSWORD)).status).toBe(200);
      now += perIp.lockMs;
      expect((await sprayer.signIn(target, TEST_PASSWORD)).status).toBe(200);
    } finally {
      await app.close();
    }
  });

  it('count guesses sent all at once: only the limit gets a password check, the rest 429', async () => {
    const target = (await createUser(server.deps.db, 'burst')).email;
    const ip = loopbackIp();
    const clients = await Promise.all(Array.from({ length: 3 * addressAndIp.maxFailures }, () => IpClient.open(server.url, ip)));
    const statuses = (await Promise.all(clients.map((c, i) => c.signIn(target, `burst-${i}-x`)))).map((r) => r.status);
    expect(statuses.filter((s) => s === 401)).toHaveLength(addressAndIp.maxFailures);
    expect(statuses.filter((s) => s === 429)).toHaveLength(2 * addressAndIp.maxFailures);
  });

  it('count only failures against a client: its successful sign-ins take their count back', async () => {
    const tight = { ...SIGN_IN_LIMITS, ip: { ...perIp, maxFailures: 3 } };
    const app = await appWith({ config: { ...server.deps.config, signInLimits: tight } });
    try {
      const user = (await createUser(server.deps.db, 'regular')).email;
      const ip = loopbackIp();
      const client = () => IpClient.open(app.url, ip);
      for (let i = 0; i < 5; i++) expect((await (await client()).signIn(user, TEST_PASSWORD)).status).toBe(200);
      for (let i = 0; i < 2; i++) expect((await (await client()).signIn(uniqueEmail('typo'), 'guess-x')).status).toBe(401);
      // The third attempt reaches the limit as it is counted, but it is right: the lock-out it set is undone.
      expect((await (await client()).signIn(user, TEST_PASSWORD)).status).toBe(200);
      expect((await (await client()).signIn(uniqueEmail('typo'), 'guess-x')).status).toBe(401);
      expect((await (await client()).signIn(user, TEST_PASSWORD)).status).toBe(429);
    } finally {
      await app.close();
    }
  });

  it('count by the connection’s address: X-Forwarded-For is ignored while trust proxy is off (the default)', async () => {
    expect(server.deps.config.trustProxy).toBe(false);
    const target = (await createUser(server.deps.db, 'forwarded')).email;
    const client = await IpClient.open(server.url, loopbackIp());
    for (let i = 0; i < addressAndIp.maxFailures; i++) {
      expect((await client.signIn(target, `guess-${i}-x`, { 'x-forwarded-for': `203.0.113.${i + 1}` })).status).toBe(401);
    }
    expect((await client.signIn(target, TEST_PASSWORD, { 'x-forwarded-for': '198.51.100.7' })).status).toBe(429);
  });

  it('are shared through PostgreSQL: a second app process on the database sees the lock-out', async () => {
    const target = (await createUser(server.deps.db, 'shared')).email;
    const ip = loopbackIp();
    const a = await IpClient.open(server.url, ip);
    for (let i = 0; i < addressAndIp.maxFailures; i++) expect((await a.signIn(target, `guess-${i}-x`)).status).toBe(401);
    // Another app (own pool, own memory) on the same database, as a second server process would be.
    const other = await appWith({});
    try {
      const client = await IpClient.open(other.url, ip);
      expect((await client.signIn(target, TEST_PASSWORD)).status).toBe(429);
      // The lock-out is the rows, nothing in memory: without them the right password gets in.
      const keys = signInKeys(target, ip);
      expect(await server.deps.db('sign_in_limits').whereIn('key', [keys.addressAndIp, keys.ip]).delete()).toBe(2);
      expect((await client.signIn(target, TEST_PASSWORD)).status).toBe(200);
    } finally {
      await other.close();
    }
  });
});

describe('share links', () => {
  it('refuse tampered tokens, and a link serves only its own run’s files', async () => {
    const ctx = { fx, server, db: server.deps.db };
    const a = await shareFixture(ctx);
    const b = await shareFixture(ctx);
    const get = (token: string, file = '') => fetch(`${server.url}/api/share/${token}${file ? `/files/${file}` : ''}`);
    expect((await get(a.token)).status).toBe(200);
    const flip = (t: string, i: number) => t.slice(0, i) + (t[i] === 'a' ? 'b' : 'a') + t.slice(i + 1);
    const tampered = [flip(a.token, 0), flip(a.token, a.token.length - 1), a.token.slice(0, -1), `${a.token}a`, a.token.toUpperCase(), `${a.token.slice(0, 10)}%2e%2e%2f${a.token.slice(10)}`];
    for (const token of tampered) {
      const res = await get(token, 'report.json');
      expect(res.status, token).toBe(404);
      expect((await res.json()).error.code, token).toBe('SHARE_NOT_FOUND');
    }
    // Link A lists run A only; run B's id in a file name is not a way across.
    const listed = (await (await get(a.token)).json()) as { share: { files: Array<{ name: string }> } };
    expect(listed.share.files.map((f) => f.name)).toEqual(['report.json']);
    expect((await get(a.token, `..%2F${b.runId}%2Freport.json`)).status).toBe(404);
    // Revoking B leaves A working; a run that is no longer done takes its links down.
    expect((await fx.actors.maker.delete(`/api/workspaces/${fx.workspaceId}/runs/${b.runId}/shares/${b.shareId}`)).status).toBe(204);
    expect((await get(b.token)).status).toBe(404);
    expect((await get(a.token, 'report.json')).status).toBe(200);
    await server.deps.db('runs').where({ id: a.runId }).update({ state: 'failed' });
    expect((await get(a.token)).status).toBe(404);
    // Share ids of one run cannot be revoked through another run.
    const c = await shareFixture(ctx);
    const { runId: otherRun } = await runFixture(ctx);
    expect((await fx.actors.maker.delete(`/api/workspaces/${fx.workspaceId}/runs/${otherRun}/shares/${c.shareId}`)).status).toBe(404);
    expect((await get(c.token)).status).toBe(200);
  });
});

describe('security headers', () => {
  const expectHelmet = (res: Response, label: string) => {
    const h = res.headers;
    // helmet 8 defaults (helmetjs.github.io) with our own 'self'-only CSP.
    expect(h.get('content-security-policy'), label).toMatch(/default-src 'self'/);
    expect(h.get('content-security-policy'), label).toMatch(/frame-ancestors 'none'/);
    expect(h.get('x-content-type-options'), label).toBe('nosniff');
    expect(h.get('x-frame-options'), label).toBe('SAMEORIGIN');
    expect(h.get('referrer-policy'), label).toBe('no-referrer');
    expect(h.get('cross-origin-opener-policy'), label).toBe('same-origin');
    expect(h.get('cross-origin-resource-policy'), label).toBe('same-origin');
    expect(h.get('x-powered-by'), label).toBeNull();
  };

  it('are on every API answer (success, 401, 404, 403) and on the HTML pages and assets', async () => {
    expect(existsSync(resolve(CLIENT_DIR, 'index.html'))).toBe(true);
    for (const route of routes.filter((r) => r.method === 'GET')) {
      const path = fill(route);
      const res = await fetch(server.url + path);
      await res.arrayBuffer();
      expectHelmet(res, `GET ${route.path} (${res.status})`);
    }
    const signedIn = await fetch(`${server.url}/api/workspaces/${fx.workspaceId}`, { headers: { Cookie: fx.actors.helper.cookie! } });
    expect(signedIn.status).toBe(200);
    expectHelmet(signedIn, 'member GET');
    const csrf = await fetch(`${server.url}/api/session`, { method: 'DELETE', headers: { Cookie: fx.actors.helper.cookie! } });
    expect(csrf.status).toBe(403);
    expectHelmet(csrf, 'CSRF 403');
    for (const page of ['/', '/w/anything/runs', '/s/some-share-token', '/invite/abc']) {
      const res = await fetch(server.url + page);
      const html = await res.text();
      expect(res.status, page).toBe(200);
      expect(html, page).toMatch(/<html/i);
      expectHelmet(res, page);
    }
    const asset = /(?:src|href)="(\/assets\/[^"]+)"/.exec(await (await fetch(`${server.url}/`)).text())?.[1];
    expect(asset).toBeTruthy();
    const assetRes = await fetch(server.url + asset);
    await assetRes.arrayBuffer();
    expect(assetRes.status).toBe(200);
    expectHelmet(assetRes, asset!);
  });
});
