// Shared fixtures for the app suite: a real server on a free port against the test database, and
// actors (anonymous, helper, maker, owner, member of another workspace) that keep their own cookies
// and CSRF token like a browser does. Later issues import these to extend the access table.
import { randomBytes } from 'node:crypto';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { Knex } from 'knex';
import { startServer, type RunningServer } from '../../server/server.ts';
import { createLogger } from '../../server/logger.ts';
import { insertUser } from '../../server/db/users.ts';
import { insertWorkspace } from '../../server/db/workspaces.ts';
import { upsertMembership } from '../../server/db/memberships.ts';
import { hashPassword } from '../../server/passwords.ts';
import type { Role } from '../../server/roles.ts';

export const ACTOR_NAMES = ['anonymous', 'outsider', 'helper', 'maker', 'owner'] as const;
export type ActorName = (typeof ACTOR_NAMES)[number];

export const TEST_PASSWORD = 'correct-horse-battery-7';

export async function startTestServer(opts: { clientDir?: string | null; seed?: boolean } = {}): Promise<RunningServer> {
  const databaseUrl = process.env.DATABASE_URL;
  if (!databaseUrl) throw new Error('DATABASE_URL is not set: run through vitest --project app');
  return startServer({
    databaseUrl,
    port: 0,
    mail: { catcherPort: 0 },
    clientDir: opts.clientDir ?? null,
    storageRoot: join(tmpdir(), `bleedwright-test-${process.pid}`),
    sessionSecret: randomBytes(16).toString('hex'),
    seed: opts.seed ?? false,
    logger: createLogger('silent'),
  });
}

// JSON bodies in tests are checked field by field, so they are loosely typed on purpose.
export interface Reply<T = any> {
  status: number;
  body: T;
  headers: Headers;
}

/** An HTTP client with a cookie jar and the CSRF token, as a browser tab would hold them. */
export class Actor {
  cookie: string | null = null;
  csrfToken: string | null = null;
  user: { id: string; email: string } | null = null;

  constructor(readonly baseUrl: string) {}

  /** Fetches a session (cookie + CSRF token) without signing in. */
  static async anonymous(baseUrl: string): Promise<Actor> {
    const actor = new Actor(baseUrl);
    await actor.refreshSession();
    return actor;
  }

  static async signedIn(baseUrl: string, email: string, password = TEST_PASSWORD): Promise<Actor> {
    const actor = await Actor.anonymous(baseUrl);
    const res = await actor.request('POST', '/api/session', { email, password });
    if (res.status !== 200) throw new Error(`sign-in as ${email} failed: ${res.status} ${JSON.stringify(res.body)}`);
    return actor;
  }

  async refreshSession(): Promise<Reply> {
    const res = await this.request('GET', '/api/session');
    this.csrfToken = res.body.csrfToken;
    return res;
  }

  async request<T = any>(method: string, path: string, body?: unknown, opts: { csrf?: boolean; cookie?: string | null } = {}): Promise<Reply<T>> {
    const headers: Record<string, string> = {};
    const cookie = opts.cookie !== undefined ? opts.cookie : this.cookie;
    if (cookie) headers.Cookie = cookie;
    if (body !== undefined) headers['Content-Type'] = 'application/json';
    if (method !== 'GET' && opts.csrf !== false && this.csrfToken) headers['X-CSRF-Token'] = this.csrfToken;
    const res = await fetch(this.baseUrl + path, { method, headers, body: body === undefined ? undefined : JSON.stringify(body) });
    const setCookie = res.headers.getSetCookie().find((c) => c.startsWith('bw.sid='));
    if (setCookie && opts.cookie === undefined) this.cookie = setCookie.split(';')[0];
    const text = await res.text();
    // Images and other downloads come back as text; only JSON answers are parsed.
    const parsed = !text ? null : (res.headers.get('content-type') ?? '').includes('json') ? JSON.parse(text) : text;
    if (parsed?.csrfToken) this.csrfToken = parsed.csrfToken;
    if (path === '/api/session' && method === 'POST' && parsed?.user) this.user = parsed.user;
    return { status: res.status, body: parsed, headers: res.headers };
  }

  get = <T = any>(path: string) => this.request<T>('GET', path);
  post = <T = any>(path: string, body?: unknown) => this.request<T>('POST', path, body ?? {});
  patch = <T = any>(path: string, body?: unknown) => this.request<T>('PATCH', path, body ?? {});
  delete = <T = any>(path: string) => this.request<T>('DELETE', path);
}

export const uniqueEmail = (label: string) => `${label}-${randomBytes(4).toString('hex')}@example.test`;

let passwordHash: Promise<string> | undefined;

/** Creates an account with TEST_PASSWORD (the argon2 hash is computed once per file). */
export async function createUser(db: Knex, label: string) {
  passwordHash ??= hashPassword(TEST_PASSWORD);
  return insertUser(db, { email: uniqueEmail(label), name: `Test ${label}`, passwordHash: await passwordHash });
}

export interface WorkspaceFixture {
  workspaceId: string;
  otherWorkspaceId: string;
  users: Record<Exclude<ActorName, 'anonymous'>, { id: string; email: string }>;
  actors: Record<ActorName, Actor>;
}

/**
 * A fresh workspace with one member per role, plus a second workspace whose owner is the
 * "outsider" (signed in, a member elsewhere, not here).
 */
export async function createWorkspaceFixture(db: Knex, baseUrl: string): Promise<WorkspaceFixture> {
  const suffix = randomBytes(4).toString('hex');
  const ws = await insertWorkspace(db, { name: `Test studio ${suffix}`, slug: `test-studio-${suffix}` });
  const other = await insertWorkspace(db, { name: `Other studio ${suffix}`, slug: `other-studio-${suffix}` });
  const users = {} as WorkspaceFixture['users'];
  for (const role of ['owner', 'maker', 'helper'] as Role[]) {
    const u = await createUser(db, role);
    await upsertMembership(db, ws.id, u.id, role);
    users[role] = { id: u.id, email: u.email };
  }
  const outsider = await createUser(db, 'outsider');
  await upsertMembership(db, other.id, outsider.id, 'owner');
  users.outsider = { id: outsider.id, email: outsider.email };
  const actors = { anonymous: await Actor.anonymous(baseUrl) } as WorkspaceFixture['actors'];
  for (const name of ['outsider', 'helper', 'maker', 'owner'] as const) actors[name] = await Actor.signedIn(baseUrl, users[name].email);
  return { workspaceId: ws.id, otherWorkspaceId: other.id, users, actors };
}

/** Waits for the mail catcher to hold a message to `to` and returns the first link in it. */
export async function waitForMailLink(server: RunningServer, to: string): Promise<string> {
  for (let i = 0; i < 100; i++) {
    const mail = server.mailCatcher?.list().find((m) => m.to.includes(to));
    const link = mail?.text.match(/https?:\/\/\S+/)?.[0];
    if (link) return link;
    await new Promise((r) => setTimeout(r, 50));
  }
  throw new Error(`no mail to ${to} arrived`);
}
