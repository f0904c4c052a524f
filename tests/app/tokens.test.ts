// API tokens: made by a signed-in member, shown once, stored as sha256, accepted as bearer tokens
// without CSRF or cookies, limited to the member's current role in one workspace, revocable.
import { createHash } from 'node:crypto';
import { readFile } from 'node:fs/promises';
import { describe, expect, it } from 'vitest';
import type { RunningServer } from '../../server/server.ts';
import { upsertMembership } from '../../server/db/memberships.ts';
import { createUser, Actor, type WorkspaceFixture } from './fixtures.ts';
import { cardSet, smallRecipe, useRunsWorkspace, zipOf } from './runs-fixtures.ts';

let server: RunningServer;
let fx: WorkspaceFixture;
let api: string;
useRunsWorkspace((w) => ({ server, fx, api } = w));

/** A request as a script would send it: the bearer token and nothing else (no cookie, no CSRF token). */
async function bearer(token: string, method: string, path: string, body?: unknown) {
  const res = await fetch(server.url + path, {
    method,
    headers: { Authorization: `Bearer ${token}`, ...(body === undefined ? {} : { 'Content-Type': 'application/json' }) },
    body: body === undefined ? undefined : JSON.stringify(body),
    redirect: 'manual',
  });
  const text = await res.text();
  return { status: res.status, headers: res.headers, body: (res.headers.get('content-type') ?? '').includes('json') && text ? JSON.parse(text) : text };
}

async function makeToken(actor: Actor, name: string): Promise<string> {
  const res = await actor.post(`${api}/tokens`, { name });
  expect(res.status).toBe(201);
  return res.body.secret;
}

describe('API tokens', () => {
  it('are shown once and stored only as their sha256', async () => {
    const res = await fx.actors.maker.post(`${api}/tokens`, { name: 'Build pipeline' });
    expect(res.status).toBe(201);
    expect(res.headers.get('cache-control')).toBe('no-store');
    const secret: string = res.body.secret;
    expect(secret).toMatch(/^bw_[A-Za-z0-9_-]{43}$/);
    expect(res.body.token).toMatchObject({ name: 'Build pipeline', prefix: secret.slice(0, 9), lastUsedAt: null, revokedAt: null });
    const row = await server.deps.db('api_tokens').where({ id: res.body.token.id }).first();
    expect(row.token_hash).toBe(createHash('sha256').update(secret).digest('hex'));
    expect(JSON.stringify(row)).not.toContain(secret.slice(9));
    const list = await fx.actors.maker.get(`${api}/tokens`);
    expect(list.body.tokens.map((t: { id: string }) => t.id)).toContain(res.body.token.id);
    expect(JSON.stringify(list.body)).not.toContain(secret.slice(9));
    // Another member does not see it.
    expect((await fx.actors.helper.get(`${api}/tokens`)).body.tokens).toEqual([]);
  });

  it('work as bearer tokens without CSRF, and set no cookie', async () => {
    const token = await makeToken(fx.actors.maker, 'Writer');
    const created = await bearer(token, 'POST', `${api}/recipes`, { settings: smallRecipe('Token recipe') });
    expect(created.status).toBe(201);
    expect(created.headers.get('set-cookie')).toBeNull();
    expect((await bearer(token, 'GET', `${api}/recipes`)).body.recipes.map((r: { name: string }) => r.name)).toContain('Token recipe');
    const listed = (await fx.actors.maker.get(`${api}/tokens`)).body.tokens.find((t: { name: string }) => t.name === 'Writer');
    expect(listed.lastUsedAt).not.toBeNull();
  });

  it('upload an art set as multipart with a token', async () => {
    const token = await makeToken(fx.actors.maker, 'Uploader');
    const form = new FormData();
    form.append('file', new Blob([await readFile(await zipOf(await cardSet(2)))]), 'token-art.zip');
    const res = await fetch(`${server.url}${api}/art-sets`, { method: 'POST', headers: { Authorization: `Bearer ${token}` }, body: form });
    expect(res.status).toBe(201);
    expect((await res.json()).artSet.entries.length).toBe(2);
  });

  it("act with the member's role, read again on every request", async () => {
    const helperToken = await makeToken(fx.actors.helper, 'Reader');
    expect((await bearer(helperToken, 'GET', `${api}/runs`)).status).toBe(200);
    expect((await bearer(helperToken, 'POST', `${api}/recipes`, { settings: smallRecipe('Not allowed') })).body.error.code).toBe('FORBIDDEN');

    const user = await createUser(server.deps.db, 'leaver');
    await upsertMembership(server.deps.db, fx.workspaceId, user.id, 'maker');
    const leaver = await Actor.signedIn(server.url, user.email);
    const token = await makeToken(leaver, 'Soon gone');
    expect((await bearer(token, 'POST', `${api}/recipes`, { settings: smallRecipe('Before demotion') })).status).toBe(201);
    await upsertMembership(server.deps.db, fx.workspaceId, user.id, 'helper');
    expect((await bearer(token, 'POST', `${api}/recipes`, { settings: smallRecipe('After demotion') })).status).toBe(403);
    const removed = await fx.actors.owner.delete(`${api}/members/${user.id}`);
    expect(removed.status).toBe(204);
    const after = await bearer(token, 'GET', `${api}/runs`);
    expect(after.status).toBe(401);
    expect(after.body.error.code).toBe('TOKEN_INVALID');
  });

  it('reach only their own workspace, and cannot make tokens', async () => {
    const token = await makeToken(fx.actors.owner, 'Scoped');
    expect((await bearer(token, 'GET', `/api/workspaces/${fx.otherWorkspaceId}/runs`)).status).toBe(403);
    expect((await bearer(token, 'GET', '/api/workspaces')).body.error.code).toBe('TOKEN_SCOPE');
    expect((await bearer(token, 'GET', '/api/session')).body.error.code).toBe('TOKEN_SCOPE');
    expect((await bearer(token, 'POST', `${api}/tokens`, { name: 'Child' })).body.error.code).toBe('TOKEN_SCOPE');
    expect((await bearer(token, 'GET', '/api/health')).status).toBe(200);
    expect((await bearer(token, 'GET', '/api/openapi.json')).status).toBe(200);
  });

  it('stop working once revoked; only their maker or an owner revokes them', async () => {
    const res = await fx.actors.maker.post(`${api}/tokens`, { name: 'Short-lived' });
    const { secret, token } = res.body;
    expect((await fx.actors.helper.delete(`${api}/tokens/${token.id}`)).status).toBe(404);
    expect((await bearer(secret, 'GET', `${api}/runs`)).status).toBe(200);
    expect((await fx.actors.owner.delete(`${api}/tokens/${token.id}`)).status).toBe(204);
    const after = await bearer(secret, 'GET', `${api}/runs`);
    expect(after.status).toBe(401);
    expect(after.body.error.code).toBe('TOKEN_INVALID');
    const listed = (await fx.actors.maker.get(`${api}/tokens`)).body.tokens.find((t: { id: string }) => t.id === token.id);
    expect(listed.revokedAt).not.toBeNull();
  });

  it('refuse unknown, malformed and wrongly sent tokens', async () => {
    expect((await bearer(`bw_${'A'.repeat(43)}`, 'GET', `${api}/runs`)).status).toBe(401);
    expect((await bearer('not-a-token', 'GET', `${api}/runs`)).status).toBe(401);
    const basic = await fetch(`${server.url}${api}/runs`, { headers: { Authorization: 'Basic dXNlcjpwYXNz' } });
    expect(basic.status).toBe(401);
    // A session request still needs its CSRF token.
    expect((await fx.actors.maker.request('POST', `${api}/tokens`, { name: 'No CSRF' }, { csrf: false })).status).toBe(403);
    expect((await fx.actors.maker.post(`${api}/tokens`, { name: '' })).body.error.code).toBe('VALIDATION');
  });
});
