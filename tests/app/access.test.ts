// Every route this app has, tried by every kind of caller (table in access-table.ts).
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { RunningServer } from '../../server/server.ts';
import { ACTOR_NAMES, createWorkspaceFixture, startTestServer, type WorkspaceFixture } from './fixtures.ts';
import { ROUTES, extraMember, pendingInvite } from './access-table.ts';

let server: RunningServer;
let fx: WorkspaceFixture;

beforeAll(async () => {
  server = await startTestServer();
  fx = await createWorkspaceFixture(server.deps.db, server.url);
});
afterAll(() => server?.close());

describe('access by role', () => {
  // The owner goes last so a write that succeeds does not change what the others are tried on.
  it.each(ROUTES)('$method $name', async (row) => {
    const { path, body } = await row.prepare({ fx, server, db: server.deps.db });
    const got: Record<string, number> = {};
    for (const actor of ACTOR_NAMES) {
      got[actor] = (await fx.actors[actor].request(row.method, path, row.method === 'GET' ? undefined : (body ?? {}))).status;
    }
    expect(got).toEqual(row.expect);
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
