import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { RunningServer } from '../../server/server.ts';
import { Actor, createUser, createWorkspaceFixture, uniqueEmail, waitForMailLink, startTestServer, type WorkspaceFixture } from './fixtures.ts';

let server: RunningServer;
let fx: WorkspaceFixture;

beforeAll(async () => {
  server = await startTestServer();
  fx = await createWorkspaceFixture(server.deps.db, server.url);
});
afterAll(() => server?.close());

const tokenOf = (link: string) => link.split('/invite/')[1];

describe('invitations by e-mail', () => {
  it('mails a one-time link through SMTP that creates an account and joins with the invited role', async () => {
    const email = uniqueEmail('newcomer');
    const sent = await fx.actors.owner.post(`/api/workspaces/${fx.workspaceId}/invites`, { email, role: 'helper' });
    expect(sent.status).toBe(201);
    const link = await waitForMailLink(server, email);
    expect(link.startsWith(`${server.url}/invite/`)).toBe(true);
    // Only a hash of the token is stored.
    const row = await server.deps.db('invites').where({ id: sent.body.id }).first();
    expect(row.token_hash).not.toContain(tokenOf(link));
    expect(row.token_hash).toMatch(/^[0-9a-f]{64}$/);
    // The captured mail page of this workspace lists it, for owners.
    const mail = await fx.actors.owner.get(`/api/workspaces/${fx.workspaceId}/mail`);
    expect(mail.body.some((m: { to: string[]; text: string }) => m.to.includes(email) && m.text.includes(link))).toBe(true);

    const guest = await Actor.anonymous(server.url);
    const preview = await guest.get(`/api/invites/${tokenOf(link)}`);
    expect(preview.body).toMatchObject({ email, role: 'helper', accountExists: false });

    const short = await guest.post(`/api/invites/${tokenOf(link)}/accept`, { name: 'Newcomer', password: 'short' });
    expect(short.status).toBe(400);
    const before = guest.cookie;
    const accepted = await guest.post(`/api/invites/${tokenOf(link)}/accept`, { name: 'Newcomer', password: 'a-long-enough-password' });
    expect(accepted.status).toBe(200);
    expect(guest.cookie).not.toBe(before); // signed in with a fresh session id
    const ws = await guest.get(`/api/workspaces/${fx.workspaceId}`);
    expect(ws.status).toBe(200);
    expect(ws.body.role).toBe('helper');

    const again = await (await Actor.anonymous(server.url)).post(`/api/invites/${tokenOf(link)}/accept`, { name: 'X', password: 'another-long-password' });
    expect(again.status).toBe(410);
    expect(again.body.error.code).toBe('INVITE_USED');
    expect((await fx.actors.owner.get(`/api/workspaces/${fx.workspaceId}/invites`)).body.map((i: { id: string }) => i.id)).not.toContain(sent.body.id);
  });

  it('asks an existing account to sign in, and only that account can accept', async () => {
    const existing = await createUser(server.deps.db, 'existing');
    await fx.actors.owner.post(`/api/workspaces/${fx.workspaceId}/invites`, { email: existing.email, role: 'maker' });
    const token = tokenOf(await waitForMailLink(server, existing.email));

    const anon = await (await Actor.anonymous(server.url)).post(`/api/invites/${token}/accept`, {});
    expect(anon.status).toBe(401);
    expect(anon.body.error.code).toBe('SIGN_IN_TO_ACCEPT');
    const wrong = await fx.actors.outsider.post(`/api/invites/${token}/accept`, {});
    expect(wrong.status).toBe(403);
    expect(wrong.body.error.code).toBe('INVITE_OTHER_ACCOUNT');

    const right = await Actor.signedIn(server.url, existing.email);
    expect((await right.post(`/api/invites/${token}/accept`, {})).status).toBe(200);
    expect((await right.get(`/api/workspaces/${fx.workspaceId}`)).body.role).toBe('maker');
  });

  it('refuses expired, withdrawn and unknown links', async () => {
    const email = uniqueEmail('late');
    const sent = await fx.actors.owner.post(`/api/workspaces/${fx.workspaceId}/invites`, { email, role: 'helper' });
    const token = tokenOf(await waitForMailLink(server, email));
    await server.deps.db('invites').where({ id: sent.body.id }).update({ expires_at: new Date(Date.now() - 1000) });
    const guest = await Actor.anonymous(server.url);
    expect((await guest.get(`/api/invites/${token}`)).body.error.code).toBe('INVITE_EXPIRED');

    const email2 = uniqueEmail('withdrawn');
    const sent2 = await fx.actors.owner.post(`/api/workspaces/${fx.workspaceId}/invites`, { email: email2, role: 'helper' });
    const token2 = tokenOf(await waitForMailLink(server, email2));
    expect((await fx.actors.owner.delete(`/api/workspaces/${fx.workspaceId}/invites/${sent2.body.id}`)).status).toBe(204);
    expect((await guest.get(`/api/invites/${token2}`)).status).toBe(404);
    expect((await guest.get('/api/invites/no-such-token')).status).toBe(404);
  });

  it('refuses to invite a member twice and keeps the last owner', async () => {
    const dup = await fx.actors.owner.post(`/api/workspaces/${fx.workspaceId}/invites`, { email: fx.users.maker.email, role: 'helper' });
    expect(dup.status).toBe(409);
    expect(dup.body.error.code).toBe('ALREADY_MEMBER');
    const demote = await fx.actors.owner.patch(`/api/workspaces/${fx.workspaceId}/members/${fx.users.owner.id}`, { role: 'maker' });
    expect(demote.status).toBe(409);
    expect(demote.body.error.code).toBe('LAST_OWNER');
    const badRole = await fx.actors.owner.patch(`/api/workspaces/${fx.workspaceId}/members/${fx.users.maker.id}`, { role: 'admin' });
    expect(badRole.status).toBe(400);
    expect(badRole.body.error.message).toMatch(/^role: /);
  });
});
