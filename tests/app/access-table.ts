// The access table: every route x every kind of caller, with the status each must get.
// Later issues add rows to ROUTES (and fixtures to RouteContext when they need objects to act on).
import type { Express } from 'express';
import type { Knex } from 'knex';
import type { RunningServer } from '../../server/server.ts';
import { upsertMembership } from '../../server/db/memberships.ts';
import { TEST_PASSWORD, createUser, uniqueEmail, waitForMailLink, type ActorName, type WorkspaceFixture } from './fixtures.ts';
import { RUN_ROUTES } from './runs-access.ts';

export interface RouteContext {
  fx: WorkspaceFixture;
  server: RunningServer;
  db: Knex;
}

export interface AccessRow {
  name: string;
  method: 'GET' | 'POST' | 'PUT' | 'PATCH' | 'DELETE';
  /** Builds the path; may create a fresh object to act on (called once per row). */
  prepare: (ctx: RouteContext) => Promise<{ path: string; body?: unknown }>;
  expect: Record<ActorName, number>;
  /** Each caller acts through a fresh session of its own (sign-in and sign-out would end the shared ones). */
  fresh?: boolean;
}

export type ApiRoute = { method: string; path: string };

/**
 * Every route the Express app serves under /api, read from its router stacks (Express 5 keeps each
 * mount path in `rawPath`), e.g. `{ method: 'GET', path: '/api/workspaces/:workspaceId/runs/:runId' }`.
 */
export function listApiRoutes(app: Express): ApiRoute[] {
  type Layer = { route?: { path: string; methods: Record<string, boolean> }; handle?: { stack?: Layer[] }; rawPath?: string };
  const out: ApiRoute[] = [];
  const walk = (stack: Layer[], prefix: string) => {
    for (const layer of stack) {
      if (layer.route) {
        const path = prefix + (layer.route.path === '/' ? '' : layer.route.path);
        for (const method of Object.keys(layer.route.methods)) if (path.startsWith('/api/')) out.push({ method: method.toUpperCase(), path });
      } else if (layer.handle?.stack) {
        walk(layer.handle.stack, prefix + (typeof layer.rawPath === 'string' && layer.rawPath !== '/' ? layer.rawPath : ''));
      }
    }
  };
  walk((app as unknown as { router: { stack: Layer[] } }).router.stack, '');
  return out;
}

/** The route pattern a concrete path (query string ignored) belongs to, or null. */
export function routeOf(routes: readonly ApiRoute[], method: string, path: string): ApiRoute | null {
  const bare = path.split('?')[0]!;
  return routes.find((r) => r.method === method && new RegExp(`^${r.path.replace(/:[A-Za-z]+/g, '[^/]+')}$`).test(bare)) ?? null;
}

export const PUBLIC = { anonymous: 200, outsider: 200, helper: 200, maker: 200, owner: 200 };
export const SIGNED_IN = { anonymous: 401, outsider: 200, helper: 200, maker: 200, owner: 200 };
export const MEMBERS = { anonymous: 401, outsider: 404, helper: 200, maker: 200, owner: 200 };
export const OWNERS = (ok: number) => ({ anonymous: 401, outsider: 404, helper: 403, maker: 403, owner: ok });

export async function extraMember(ctx: RouteContext): Promise<string> {
  const u = await createUser(ctx.db, 'target');
  await upsertMembership(ctx.db, ctx.fx.workspaceId, u.id, 'helper');
  return u.id;
}

export async function pendingInvite(ctx: RouteContext): Promise<{ id: string; token: string }> {
  const email = uniqueEmail('invitee');
  const res = await ctx.fx.actors.owner.post(`/api/workspaces/${ctx.fx.workspaceId}/invites`, { email, role: 'helper' });
  const link = await waitForMailLink(ctx.server, email);
  return { id: res.body.id, token: link.split('/invite/')[1] };
}

/** A fresh price sheet (invented prices) to read, change or delete. */
export async function demoPriceSheet(ctx: RouteContext): Promise<string> {
  const res = await ctx.fx.actors.owner.post(`/api/workspaces/${ctx.fx.workspaceId}/price-sheets`, priceSheetBody());
  if (res.status !== 201) throw new Error(`price sheet not created: ${res.status} ${JSON.stringify(res.body)}`);
  return res.body.priceSheet.id;
}

export const priceSheetBody = () => ({
  name: `Sheet ${Math.random().toString(36).slice(2, 8)}`,
  currency: 'EUR',
  tiers: [{ maxCards: 54, pricePerSet: 9.5 }],
  setupFee: 20,
  setupWaivedAtSets: 10,
  stocks: [],
});

/** Owners and makers write; helpers only read; outsiders see nothing. */
export const WRITERS = (ok: number) => ({ anonymous: 401, outsider: 404, helper: 403, maker: ok, owner: ok });

export const ROUTES: AccessRow[] = [
  { name: 'health', method: 'GET', prepare: async () => ({ path: '/api/health' }), expect: PUBLIC },
  { name: 'session', method: 'GET', prepare: async () => ({ path: '/api/session' }), expect: PUBLIC },
  {
    name: 'sign in',
    method: 'POST',
    prepare: async (ctx) => ({ path: '/api/session', body: { email: (await createUser(ctx.db, 'signin')).email, password: TEST_PASSWORD } }),
    expect: PUBLIC,
    fresh: true,
  },
  { name: 'sign out', method: 'DELETE', prepare: async () => ({ path: '/api/session' }), expect: { anonymous: 204, outsider: 204, helper: 204, maker: 204, owner: 204 }, fresh: true },
  { name: 'list workspaces', method: 'GET', prepare: async () => ({ path: '/api/workspaces' }), expect: SIGNED_IN },
  { name: 'workspace', method: 'GET', prepare: async ({ fx }) => ({ path: `/api/workspaces/${fx.workspaceId}` }), expect: MEMBERS },
  { name: 'list members', method: 'GET', prepare: async ({ fx }) => ({ path: `/api/workspaces/${fx.workspaceId}/members` }), expect: MEMBERS },
  {
    name: 'change role',
    method: 'PATCH',
    prepare: async (ctx) => ({ path: `/api/workspaces/${ctx.fx.workspaceId}/members/${await extraMember(ctx)}`, body: { role: 'maker' } }),
    expect: OWNERS(204),
  },
  {
    name: 'remove member',
    method: 'DELETE',
    prepare: async (ctx) => ({ path: `/api/workspaces/${ctx.fx.workspaceId}/members/${await extraMember(ctx)}` }),
    expect: OWNERS(204),
  },
  { name: 'list invites', method: 'GET', prepare: async ({ fx }) => ({ path: `/api/workspaces/${fx.workspaceId}/invites` }), expect: OWNERS(200) },
  {
    name: 'send invite',
    method: 'POST',
    prepare: async ({ fx }) => ({ path: `/api/workspaces/${fx.workspaceId}/invites`, body: { email: uniqueEmail('new'), role: 'helper' } }),
    expect: OWNERS(201),
  },
  {
    name: 'withdraw invite',
    method: 'DELETE',
    prepare: async (ctx) => ({ path: `/api/workspaces/${ctx.fx.workspaceId}/invites/${(await pendingInvite(ctx)).id}` }),
    expect: OWNERS(204),
  },
  { name: 'captured mail', method: 'GET', prepare: async ({ fx }) => ({ path: `/api/workspaces/${fx.workspaceId}/mail` }), expect: OWNERS(200) },
  { name: 'invite preview', method: 'GET', prepare: async (ctx) => ({ path: `/api/invites/${(await pendingInvite(ctx)).token}` }), expect: PUBLIC },
  {
    // Without a password nobody can take it: anonymous callers must choose one, accounts that are not the invited one are refused.
    name: 'accept invite',
    method: 'POST',
    prepare: async (ctx) => ({ path: `/api/invites/${(await pendingInvite(ctx)).token}/accept`, body: {} }),
    expect: { anonymous: 400, outsider: 403, helper: 403, maker: 403, owner: 403 },
  },
  { name: 'list price sheets', method: 'GET', prepare: async ({ fx }) => ({ path: `/api/workspaces/${fx.workspaceId}/price-sheets` }), expect: MEMBERS },
  {
    name: 'create price sheet',
    method: 'POST',
    prepare: async ({ fx }) => ({ path: `/api/workspaces/${fx.workspaceId}/price-sheets`, body: priceSheetBody() }),
    // Each actor's attempt uses the same name, so the maker's success makes the owner's a duplicate.
    expect: { ...WRITERS(201), owner: 409 },
  },
  { name: 'price sheet', method: 'GET', prepare: async (ctx) => ({ path: `/api/workspaces/${ctx.fx.workspaceId}/price-sheets/${await demoPriceSheet(ctx)}` }), expect: MEMBERS },
  {
    name: 'change price sheet',
    method: 'PATCH',
    prepare: async (ctx) => ({ path: `/api/workspaces/${ctx.fx.workspaceId}/price-sheets/${await demoPriceSheet(ctx)}`, body: priceSheetBody() }),
    expect: WRITERS(200),
  },
  {
    name: 'delete price sheet',
    method: 'DELETE',
    prepare: async (ctx) => ({ path: `/api/workspaces/${ctx.fx.workspaceId}/price-sheets/${await demoPriceSheet(ctx)}` }),
    // The maker deletes it first; the owner then finds nothing.
    expect: { ...WRITERS(204), owner: 404 },
  },
  // API tokens and the OpenAPI document (issue 8): each member manages their own tokens.
  { name: 'openapi document', method: 'GET', prepare: async () => ({ path: '/api/openapi.json' }), expect: PUBLIC },
  { name: 'list tokens', method: 'GET', prepare: async ({ fx }) => ({ path: `/api/workspaces/${fx.workspaceId}/tokens` }), expect: MEMBERS },
  {
    name: 'create token',
    method: 'POST',
    prepare: async ({ fx }) => ({ path: `/api/workspaces/${fx.workspaceId}/tokens`, body: { name: 'Access table token' } }),
    expect: { anonymous: 401, outsider: 404, helper: 201, maker: 201, owner: 201 },
  },
  {
    name: 'revoke token',
    method: 'DELETE',
    // The owner's own token: other members find nothing to revoke; the owner may revoke any token here.
    prepare: async ({ fx }) => ({ path: `/api/workspaces/${fx.workspaceId}/tokens/${(await fx.actors.owner.post(`/api/workspaces/${fx.workspaceId}/tokens`, { name: 'To revoke' })).body.token.id}` }),
    expect: { anonymous: 401, outsider: 404, helper: 404, maker: 404, owner: 204 },
  },
  // Runs (issue 4): recipes, art sets, runs, share links.
  ...RUN_ROUTES,
];

