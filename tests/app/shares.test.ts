// Share links: a signed-out visitor downloads a finished run's bundle; revoked, expired, unknown and
// mismatched links are refused; downloads are attachments with nosniff.
import { readFile } from 'node:fs/promises';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { RunningServer } from '../../server/server.ts';
import { createWorkspaceFixture, type WorkspaceFixture } from './fixtures.ts';
import { cardSet, smallRecipe, startRunsServer, upload, waitForRun, zipOf } from './runs-fixtures.ts';

let server: RunningServer;
let fx: WorkspaceFixture;
let api: string;
let stop: () => Promise<void>;
let runA: any;
let runB: any;

async function finishedRun(name: string, cards: number) {
  const recipe = (await fx.actors.maker.post(`${api}/recipes`, { settings: smallRecipe(name) })).body.recipe;
  const zip = await readFile(await zipOf(await cardSet(cards)));
  const art = (await upload(fx.actors.maker, `${api}/art-sets`, [{ field: 'file', name: `${name}.zip`, data: zip }])).body.artSet;
  const start = await fx.actors.maker.post(`${api}/runs`, { recipeId: recipe.id, artSetId: art.id });
  return waitForRun(fx.actors.maker, fx.workspaceId, start.body.run.id);
}

const tokenOf = (url: string) => url.split('/s/')[1]!;

beforeAll(async () => {
  ({ server, stop } = await startRunsServer());
  fx = await createWorkspaceFixture(server.deps.db, server.url);
  api = `/api/workspaces/${fx.workspaceId}`;
  runA = await finishedRun('Tollgate deck', 2);
  runB = await finishedRun('Quarry deck', 1);
});
afterAll(() => stop?.());

describe('share links', () => {
  it('lets a signed-out visitor download the bundle as an attachment', async () => {
    const created = await fx.actors.maker.post(`${api}/runs/${runA.id}/shares`, { expiresInHours: 24, label: 'For the print helper' });
    expect(created.status).toBe(201);
    expect(created.body.share.url).toMatch(new RegExp(`^${server.url}/s/[A-Za-z0-9_-]{20,}$`));
    const token = tokenOf(created.body.share.url);
    // Only the hash is stored.
    expect(await server.deps.db('share_links').where({ token_hash: token }).first()).toBeUndefined();

    const info = await fetch(`${server.url}/api/share/${token}`);
    expect(info.status).toBe(200);
    const body = await info.json();
    expect(body.share.files.map((f: { name: string }) => f.name)).toContain('bundle.zip');
    expect(body.share.workspaceName).toMatch(/^Test studio/);

    const res = await fetch(`${server.url}/api/share/${token}/files/bundle.zip`);
    expect(res.status).toBe(200);
    expect(res.headers.get('content-disposition')).toMatch(/^attachment; filename="?bundle\.zip"?$/);
    expect(res.headers.get('x-content-type-options')).toBe('nosniff');
    const zip = Buffer.from(await res.arrayBuffer());
    expect(zip.subarray(0, 4).toString('hex')).toBe('504b0304'); // PKWARE APPNOTE 4.3.7 local file header
    expect(zip.length).toBe(runA.outputs.find((o: { name: string }) => o.name === 'bundle.zip').bytes);

    const list = (await fx.actors.owner.get(`${api}/runs/${runA.id}/shares`)).body.shares;
    expect(list.find((s: { id: string }) => s.id === created.body.share.id)).toMatchObject({ downloads: 1, label: 'For the print helper', revokedAt: null });
  });

  it('refuses revoked, expired, unknown and mismatched links', async () => {
    const make = async () => (await fx.actors.maker.post(`${api}/runs/${runA.id}/shares`, { expiresInHours: 1 })).body.share;
    const revoked = await make();
    expect((await fx.actors.maker.delete(`${api}/runs/${runA.id}/shares/${revoked.id}`)).status).toBe(204);
    const r1 = await fetch(`${server.url}/api/share/${tokenOf(revoked.url)}/files/bundle.zip`);
    expect(r1.status).toBe(404);
    expect((await r1.json()).error.code).toBe('SHARE_NOT_FOUND');

    const expired = await make();
    await server.deps.db('share_links').where({ id: expired.id }).update({ expires_at: new Date(Date.now() - 1000) });
    expect((await fetch(`${server.url}/api/share/${tokenOf(expired.url)}`)).status).toBe(404);
    expect((await fetch(`${server.url}/api/share/${tokenOf(expired.url)}/files/bundle.zip`)).status).toBe(404);

    expect((await fetch(`${server.url}/api/share/${'x'.repeat(32)}`)).status).toBe(404);
    const live = await make();
    // A name the run does not list, and a path trying to leave the run folder.
    expect((await fetch(`${server.url}/api/share/${tokenOf(live.url)}/files/other.zip`)).status).toBe(404);
    expect((await fetch(`${server.url}/api/share/${tokenOf(live.url)}/files/..%2F..%2Fblobs`)).status).toBe(404);
    // Revoking a share through another run's id does nothing.
    expect((await fx.actors.maker.delete(`${api}/runs/${runB.id}/shares/${live.id}`)).status).toBe(404);
    expect((await fetch(`${server.url}/api/share/${tokenOf(live.url)}/files/bundle.zip`)).status).toBe(200);
    // Helpers cannot create links; another workspace's owner cannot see this run.
    expect((await fx.actors.helper.post(`${api}/runs/${runA.id}/shares`, { expiresInHours: 1 })).status).toBe(403);
    expect((await fx.actors.outsider.post(`/api/workspaces/${fx.otherWorkspaceId}/runs/${runA.id}/shares`, { expiresInHours: 1 })).status).toBe(404);
    expect((await fx.actors.maker.post(`${api}/runs/${runA.id}/shares`, { expiresInHours: 721 })).body.error.details[0].path).toBe('expiresInHours');
  });
});
