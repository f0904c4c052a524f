// Every route this app has, tried by every kind of caller (table in access-table.ts).
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { RunningServer } from '../../server/server.ts';
import { createApp } from '../../server/app.ts';
import { ACTOR_NAMES, Actor, createWorkspaceFixture, startTestServer, type WorkspaceFixture } from './fixtures.ts';
import { ROUTES, extraMember, listApiRoutes, pendingInvite, routeOf, type ApiRoute } from './access-table.ts';

let server: RunningServer;
let fx: WorkspaceFixture;
let apiRoutes: ApiRoute[];
const tried = new Set<string>();

beforeAll(async () => {
  server = await startTestServer();
  fx = await createWorkspaceFixture(server.deps.db, server.url);
  apiRoutes = listApiRoutes(createApp(server.deps));
});
afterAll(() => server?.close());

describe('access by role', () => {
  // The owner goes last so a write that succeeds does not change what the others are tried on.
  it.each(ROUTES)('$method $name', async (row) => {
    const { path, body } = await row.prepare({ fx, server, db: server.deps.db });
    const route = routeOf(apiRoutes, row.method, path);
    if (route) tried.add(`${route.method} ${route.path}`);
    const got: Record<string, number> = {};
    for (const actor of ACTOR_NAMES) {
      const caller = !row.fresh ? fx.actors[actor] : actor === 'anonymous' ? await Actor.anonymous(server.url) : await Actor.signedIn(server.url, fx.users[actor].email);
      got[actor] = (await caller.request(row.method, path, row.method === 'GET' ? undefined : (body ?? {}))).status;
    }
    expect(route, `${row.method} ${path} matches no route of the app`).not.toBeNull();
    expect(got).toEqual(row.expect);
  });

  // Runs after the table: a route added to a router but not to ROUTES fails here.
  it('tries every route the app serves', () => {
    const missing = apiRoutes.map((r) => `${r.method} ${r.path}`).filter((r) => !tried.has(r));
    expect(apiRoutes.length).toBeGreaterThan(40);
    expect(missing).toEqual([]);
  });

  it('answers 404 for an object of another workspace, even to that workspace’s owner', async () => {
    const outsider = fx.actors.outsider;
    const ctx = { fx, server, db: server.deps.db };
    const memberHere = await extraMember(ctx);
    const invite = await pendingInvite(ctx);
    expect((await outsider.patch(`/api/workspaces/${fx.otherWorkspaceId}/members/${memberHere}`, { role: 'owner' })).status).toBe(404);
    expect((await outsider.delete(`/api/workspaces/${fx.otherWorkspaceId}/members/${memberHere}`)).status).toBe(404);
    expect((await outsider.delete(`/api/workspaces/${fx.otherWorkspaceId}/invites/${invite.id}`)).status).toBe(404);
    // The objects are untouched.
    const members = (await fx.actors.owner.get(`/api/workspaces/${fx.workspaceId}/members`)).body as { userId: string; role: string }[];
    expect(members.find((m) => m.userId === memberHere)?.role).toBe('helper');
    expect((await fx.actors.owner.get(`/api/workspaces/${fx.workspaceId}/invites`)).body.map((i: { id: string }) => i.id)).toContain(invite.id);
  });

  it('answers 404 for malformed ids instead of a server error', async () => {
    expect((await fx.actors.owner.get('/api/workspaces/not-a-uuid')).status).toBe(404);
    expect((await fx.actors.owner.delete(`/api/workspaces/${fx.workspaceId}/members/not-a-uuid`)).status).toBe(404);
  });
});
