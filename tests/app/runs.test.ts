// A run end to end through the API, real pg-boss workers in this process, real files: upload, run,
// per-card rows, outputs checked with poppler's pdfinfo, downloads, mail, cancel, art set dedupe.
import { execFileSync } from 'node:child_process';
import { mkdtemp, readFile, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { RunningServer } from '../../server/server.ts';
import { makeZip } from '../engine/helpers.ts';
import { runEngine } from '../../jobs/engine/run.ts';
import { parseRecipe } from '../../shared/recipe.ts';
import { createWorkspaceFixture, type WorkspaceFixture } from './fixtures.ts';
import { cardSet, filesIn, smallRecipe, startRunsServer, upload, waitForRun, zipOf } from './runs-fixtures.ts';

let server: RunningServer;
let fx: WorkspaceFixture;
let tmpDir: string;
let api: string;
let stop: () => Promise<void>;

beforeAll(async () => {
  ({ server, tmpDir, stop } = await startRunsServer({ runs: { uploadMaxBytes: 2 * 1024 * 1024 } }));
  fx = await createWorkspaceFixture(server.deps.db, server.url);
  api = `/api/workspaces/${fx.workspaceId}`;
});
afterAll(() => stop?.());

async function newRecipe(name: string, extra = {}) {
  const res = await fx.actors.maker.post(`${api}/recipes`, { settings: smallRecipe(name, extra) });
  expect(res.status).toBe(201);
  return res.body.recipe;
}

async function uploadZip(files: Record<string, Buffer>, name = 'Test art') {
  const zip = await readFile(await zipOf(files));
  return upload(fx.actors.maker, `${api}/art-sets`, [{ field: 'file', name: 'art.zip', data: zip }], { name });
}

describe('a run from upload to bundle', () => {
  it('renders every card once, writes the outputs and mails the starter', async () => {
    const recipe = await newRecipe('Harbor lanterns');
    const up = await uploadZip(await cardSet(5), 'Harbor art');
    expect(up.status).toBe(201);
    expect(up.body.deduplicated).toBe(false);
    expect(up.body.artSet.entries).toHaveLength(5);
    expect(up.body.artSet.entries[0]).toMatchObject({ kind: 'image', width: 250, height: 350, format: 'png' });

    const start = await fx.actors.maker.post(`${api}/runs`, { recipeId: recipe.id, artSetId: up.body.artSet.id });
    expect(start.status).toBe(201);
    expect(start.body.run.recipe.version).toBe(1);
    const run = await waitForRun(fx.actors.maker, fx.workspaceId, start.body.run.id);
    expect(run.state).toBe('done');
    expect(run.progress).toMatchObject({ total: 5, done: 5, skipped: 0, failed: 0 });
    expect(run.outputs.map((o: { kind: string }) => o.kind).sort()).toEqual(['bundle', 'pdf', 'proof', 'report-csv', 'report-json']);
    expect(run.totals).toMatchObject({ cards: 5, pages: 5 });

    const cards = (await fx.actors.helper.get(`${api}/runs/${run.id}/cards`)).body.cards;
    expect(cards).toHaveLength(5);
    for (const c of cards) {
      expect(c.state).toBe('done');
      expect(c.sourcePx).toEqual({ w: 250, h: 350 });
      expect(c.effectiveDpi).toBeGreaterThan(0);
    }
    const thumb = await fetch(`${server.url}${api}/runs/${run.id}/cards/${cards[0].id}/image?size=thumb`, { headers: { Cookie: fx.actors.helper.cookie! } });
    expect(thumb.status).toBe(200);
    expect(thumb.headers.get('content-type')).toBe('image/webp');

    // The PDF as a helper downloads it: an attachment, not sniffed, with one page per card and the
    // TrimBox inset by the bleed (ISO 32000-1 14.11.2; poker + 1/8 in bleed: 0 0 198 270 / 9 9 189 261).
    const pdfName = run.outputs.find((o: { kind: string }) => o.kind === 'pdf').name;
    const res = await fetch(`${server.url}${api}/runs/${run.id}/files/${pdfName}`, { headers: { Cookie: fx.actors.helper.cookie! } });
    expect(res.status).toBe(200);
    expect(res.headers.get('content-disposition')).toMatch(/^attachment/);
    expect(res.headers.get('x-content-type-options')).toBe('nosniff');
    const dir = await mkdtemp(path.join(tmpdir(), 'bw-pdf-'));
    const file = path.join(dir, 'deck.pdf');
    await writeFile(file, Buffer.from(await res.arrayBuffer()));
    const info = execFileSync('pdfinfo', ['-box', '-f', '1', '-l', '5', file], { encoding: 'utf8' });
    expect(info).toMatch(/^Pages:\s+5$/m);
    expect(info).toMatch(/Page\s+1 size:\s+198 x 270 pts/);
    expect(info).toMatch(/Page\s+5 TrimBox:\s+9\.00\s+9\.00\s+189\.00\s+261\.00/);

    // Mail to the starter with the totals and a link to the run page.
    let mail;
    for (let i = 0; i < 100 && !mail; i++) {
      mail = server.mailCatcher!.list().find((m) => m.to.includes(fx.users.maker.email) && m.text.includes(run.id));
      if (!mail) await new Promise((r) => setTimeout(r, 50));
    }
    expect(mail?.subject).toMatch(/^Run done:/);
    expect(mail?.text).toMatch(/Cards: 5 \(done 5/);
    expect(mail?.text).toContain(`${server.url}/w/${fx.workspaceId}/runs/${run.id}`);

    // Every card row exactly once.
    const rows = await server.deps.db('run_cards').where({ run_id: run.id }).count<{ count: string }[]>('* as count');
    expect(Number(rows[0]!.count)).toBe(5);
  });

  it('streams progress as server-sent events until the run ends, and mails followers', async () => {
    const recipe = await newRecipe('Streamed deck');
    const up = await uploadZip(await cardSet(3), 'Streamed art');
    const start = await fx.actors.maker.post(`${api}/runs`, { recipeId: recipe.id, artSetId: up.body.artSet.id });
    const runId = start.body.run.id;
    const follow = await fx.actors.helper.post(`${api}/runs/${runId}/follow`, { follow: true });
    expect(follow.body.run.following).toBe(true);
    const res = await fetch(`${server.url}${api}/runs/${runId}/events`, { headers: { Cookie: fx.actors.maker.cookie! } });
    expect(res.headers.get('content-type')).toMatch(/^text\/event-stream/);
    const text = await res.text(); // the server ends the stream when the run is terminal
    const states = [...text.matchAll(/^data: (.*)$/gm)].map((m) => JSON.parse(m[1]!).run.state);
    expect(states.at(-1)).toBe('done');
    let mail;
    for (let i = 0; i < 100 && !mail; i++) {
      mail = server.mailCatcher!.list().find((m) => m.to.includes(fx.users.helper.email) && m.text.includes(runId));
      if (!mail) await new Promise((r) => setTimeout(r, 50));
    }
    expect(mail?.text).toMatch(/Cards: 3 \(done 3/);
  });

  it('writes the same PDF bytes as the engine run on its own (the CLI path)', async () => {
    const recipe = await newRecipe('Same bytes deck');
    const zipPath = await zipOf(await cardSet(4));
    const up = await upload(fx.actors.maker, `${api}/art-sets`, [{ field: 'file', name: 'same.zip', data: await readFile(zipPath) }]);
    const run = await waitForRun(fx.actors.maker, fx.workspaceId, (await fx.actors.maker.post(`${api}/runs`, { recipeId: recipe.id, artSetId: up.body.artSet.id })).body.run.id);
    expect(run.state).toBe('done');
    const out = await mkdtemp(path.join(tmpdir(), 'bw-cli-'));
    const cli = await runEngine({ source: zipPath, recipe: parseRecipe(recipe.settings), outDir: out });
    const pdf = run.outputs.find((o: { kind: string }) => o.kind === 'pdf').name;
    expect(pdf).toBe(cli.report.outputs.pdf);
    const res = await fetch(`${server.url}${api}/runs/${run.id}/files/${pdf}`, { headers: { Cookie: fx.actors.maker.cookie! } });
    expect(Buffer.compare(Buffer.from(await res.arrayBuffer()), await readFile(path.join(out, pdf)))).toBe(0);
  });

  it('stores the same zip once and answers with the existing art set', async () => {
    const files = await cardSet(2);
    const first = await uploadZip(files, 'Twice');
    const second = await uploadZip(files, 'Twice again');
    expect(first.status).toBe(201);
    expect(second.status).toBe(200);
    expect(second.body.deduplicated).toBe(true);
    expect(second.body.artSet.id).toBe(first.body.artSet.id);
    const sha = first.body.artSet.revisions[0].sha256;
    expect(await server.deps.db('art_set_revisions').where({ workspace_id: fx.workspaceId, sha256: sha }).count<{ count: string }[]>('* as count')).toEqual([{ count: '1' }]);
  });

  it('refuses garbage, over-limit and escaping zips, leaving no rows and no temp files', async () => {
    const before = Number((await server.deps.db('art_sets').where({ workspace_id: fx.workspaceId }).count<{ count: string }[]>('* as count'))[0]!.count);
    const garbage = await upload(fx.actors.maker, `${api}/art-sets`, [{ field: 'file', name: 'junk.zip', data: Buffer.from('this is not a zip file at all') }]);
    expect(garbage.status).toBe(400);
    expect(garbage.body.error.code).toBe('ARCHIVE_UNREADABLE');

    const big = await upload(fx.actors.maker, `${api}/art-sets`, [{ field: 'file', name: 'big.zip', data: Buffer.alloc(3 * 1024 * 1024, 7) }]);
    expect(big.status).toBe(413);
    expect(big.body.error.code).toBe('UPLOAD_TOO_LARGE');

    const hostile = makeZip([{ name: '../outside.png', data: (await cardSet(1))['card-01.png']! }]);
    const escaping = await upload(fx.actors.maker, `${api}/art-sets`, [{ field: 'file', name: 'escape.zip', data: hostile }]);
    expect(escaping.status).toBe(400);
    expect(escaping.body.error.code).toBe('ARCHIVE_PATH');

    const after = Number((await server.deps.db('art_sets').where({ workspace_id: fx.workspaceId }).count<{ count: string }[]>('* as count'))[0]!.count);
    expect(after).toBe(before);
    expect(await filesIn(tmpDir)).toEqual([]);
  });

  it('adds and replaces single images as a new revision', async () => {
    const up = await uploadZip(await cardSet(3), 'Revisions');
    const id = up.body.artSet.id;
    const extra = await cardSet(4, { 2: 5 });
    const res = await upload(fx.actors.maker, `${api}/art-sets/${id}/files`, [
      { field: 'files', name: 'card-02.png', data: extra['card-02.png']! },
      { field: 'files', name: 'card-04.png', data: extra['card-04.png']! },
    ]);
    expect(res.status).toBe(201);
    expect(res.body.artSet.revision).toBe(2);
    expect(res.body.artSet.entries.map((e: { path: string }) => e.path)).toEqual(['card-01.png', 'card-02.png', 'card-03.png', 'card-04.png']);
    const old = up.body.artSet.entries.find((e: { path: string }) => e.path === 'card-02.png');
    const now = res.body.artSet.entries.find((e: { path: string }) => e.path === 'card-02.png');
    expect(now.sha256).not.toBe(old.sha256);
    const first = (await fx.actors.helper.get(`${api}/art-sets/${id}?revision=1`)).body.artSet;
    expect(first.entries).toHaveLength(3);
    const thumb = await fetch(`${server.url}${api}/art-sets/${id}/revisions/2/thumbnail?path=card-04.png`, { headers: { Cookie: fx.actors.helper.cookie! } });
    expect(thumb.status).toBe(200);
    const meta = await (await import('sharp')).default(Buffer.from(await thumb.arrayBuffer())).metadata();
    expect(meta.format).toBe('webp');
    expect(Math.max(meta.width!, meta.height!)).toBeLessThanOrEqual(240);
    expect(await filesIn(tmpDir)).toEqual([]);
  });

  it('cancel stops new renders and leaves counts that match the card rows', async () => {
    // Enough work that renders are still queued when the cancel lands, however quickly workers are
    // woken: 60 cards conformed up to 300 DPI (825 x 1125 each), a few at a time.
    const recipe = await newRecipe('Cancel me', { dpi: 300 });
    const up = await uploadZip(await cardSet(60), 'Cancel art');
    const start = await fx.actors.maker.post(`${api}/runs`, { recipeId: recipe.id, artSetId: up.body.artSet.id });
    const runId = start.body.run.id;
    await waitForRun(fx.actors.maker, fx.workspaceId, runId, 30_000, (r) => r.progress.total > 0);
    const canceled = await fx.actors.maker.post(`${api}/runs/${runId}/cancel`);
    expect(canceled.status).toBe(200);
    expect(canceled.body.run.state).toBe('canceled');
    // Renders already running finish; then nothing is open and nothing is assembled.
    let cards: Array<{ state: string }> = [];
    for (let i = 0; i < 80; i++) {
      cards = (await fx.actors.maker.get(`${api}/runs/${runId}/cards`)).body.cards;
      if (cards.every((c) => !['pending', 'rendering'].includes(c.state))) break;
      await new Promise((r) => setTimeout(r, 250));
    }
    expect(cards.every((c) => ['done', 'skipped', 'canceled'].includes(c.state))).toBe(true);
    expect(cards.some((c) => c.state === 'canceled')).toBe(true);
    await new Promise((r) => setTimeout(r, 1500));
    const run = (await fx.actors.maker.get(`${api}/runs/${runId}`)).body.run;
    expect(run.state).toBe('canceled');
    expect(run.outputs).toEqual([]);
    expect(run.progress.done).toBe(cards.filter((c) => c.state === 'done').length);
    expect(run.progress.total).toBe(cards.length);
    expect((await fx.actors.maker.post(`${api}/runs/${runId}/cancel`)).status).toBe(409);
  });
});
