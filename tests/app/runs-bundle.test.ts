// A run's bundle is kept as the layout of a composed zip (server/composed-zip.ts) and streamed from the
// stored files at download: checked here with Debian's unzip and zipinfo (Info-ZIP, independent of our
// zip code), against the run's own PDF download and the renders, and in byte ranges (RFC 9110 14).
import { execFileSync } from 'node:child_process';
import { mkdtemp, readFile, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import type { RunningServer } from '../../server/server.ts';
import { storageKeys } from '../../server/storage.ts';
import type { WorkspaceFixture } from './fixtures.ts';
import { cardSet, smallRecipe, upload, useRunsWorkspace, waitForRun, zipOf } from './runs-fixtures.ts';

let server: RunningServer;
let fx: WorkspaceFixture;
let api: string;
useRunsWorkspace((w) => ({ server, fx, api } = w));

async function finishedRun(name: string, cards: number, extra: Parameters<typeof smallRecipe>[1] = {}) {
  const recipe = (await fx.actors.maker.post(`${api}/recipes`, { settings: smallRecipe(name, extra) })).body.recipe;
  const zip = await readFile(await zipOf(await cardSet(cards)));
  const art = (await upload(fx.actors.maker, `${api}/art-sets`, [{ field: 'file', name: `${name}.zip`, data: zip }])).body.artSet;
  const start = await fx.actors.maker.post(`${api}/runs`, { recipeId: recipe.id, artSetId: art.id });
  const run = await waitForRun(fx.actors.maker, fx.workspaceId, start.body.run.id);
  expect(run.state).toBe('done');
  return run;
}

const download = (runId: string, name: string, headers: Record<string, string> = {}) =>
  fetch(`${server.url}${api}/runs/${runId}/files/${encodeURIComponent(name)}`, { headers: { Cookie: fx.actors.helper.cookie!, ...headers } });

describe('composed bundles', () => {
  it('streams a zip that unzip accepts, holding the run files and the renders byte for byte, without a stored copy', async () => {
    const run = await finishedRun('Lantern deck', 3);
    const listed = run.outputs.find((o: { kind: string }) => o.kind === 'bundle');
    const res = await download(run.id, 'bundle.zip');
    expect(res.status).toBe(200);
    expect(res.headers.get('content-type')).toBe('application/zip');
    expect(res.headers.get('accept-ranges')).toBe('bytes');
    expect(res.headers.get('content-disposition')).toMatch(/^attachment; filename="?bundle\.zip"?$/);
    const zip = Buffer.from(await res.arrayBuffer());
    expect(zip.length).toBe(listed.bytes);
    expect(Number(res.headers.get('content-length'))).toBe(listed.bytes);

    // Storage holds the layout only: no second copy of the cards and the PDF.
    const storage = server.deps.runs.storage;
    const bundleKey = storageKeys.runFile(fx.workspaceId, run.id, 'bundle.zip');
    expect(await storage.exists(bundleKey)).toBe(false);
    expect(await storage.exists(`${bundleKey}.parts.json`)).toBe(true);

    const dir = await mkdtemp(path.join(tmpdir(), 'bw-bundle-'));
    try {
      const file = path.join(dir, 'bundle.zip');
      await writeFile(file, zip);
      // unzip -t tests every entry's CRC-32 against its data (Info-ZIP).
      expect(execFileSync('unzip', ['-t', file], { encoding: 'utf8' })).toMatch(/No errors detected/);
      const names = execFileSync('zipinfo', ['-1', file], { encoding: 'utf8' }).trim().split('\n');
      const pdf = run.outputs.find((o: { kind: string }) => o.kind === 'pdf').name;
      expect(names).toEqual(['cards/card-01.png', 'cards/card-02.png', 'cards/card-03.png', pdf, 'proof.pdf', 'report.json', 'report.csv']);
      // Each entry is the same bytes as the file it stands for.
      const entry = (name: string) => execFileSync('unzip', ['-p', file, name], { maxBuffer: 64 * 1024 * 1024 });
      expect(entry(pdf).equals(Buffer.from(await (await download(run.id, pdf)).arrayBuffer()))).toBe(true);
      expect(entry('report.json').equals(Buffer.from(await (await download(run.id, 'report.json')).arrayBuffer()))).toBe(true);
      const card = await server.deps.db('run_cards').where({ run_id: run.id, source: 'card-02.png' }).first('info');
      expect(entry('cards/card-02.png').equals(await readFile(storage.path(card.info.renderKey)))).toBe(true);
    } finally {
      await rm(dir, { recursive: true, force: true });
    }

    // Byte ranges (RFC 9110 14.1.2) give the same bytes as the whole, across the zip's parts.
    const slice = async (range: string, from: number, to: number) => {
      const r = await download(run.id, 'bundle.zip', { Range: range });
      expect(r.status).toBe(206);
      expect(r.headers.get('content-range')).toBe(`bytes ${from}-${to - 1}/${zip.length}`);
      expect(Buffer.from(await r.arrayBuffer()).equals(zip.subarray(from, to))).toBe(true);
    };
    await slice('bytes=0-99', 0, 100);
    const mid = Math.floor(zip.length / 2);
    await slice(`bytes=20-${mid}`, 20, mid + 1);
    await slice(`bytes=${zip.length - 5000}-`, zip.length - 5000, zip.length);
    await slice('bytes=-300', zip.length - 300, zip.length);
    const beyond = await download(run.id, 'bundle.zip', { Range: `bytes=${zip.length + 10}-` });
    expect(beyond.status).toBe(416);
    expect(beyond.headers.get('content-range')).toBe(`bytes */${zip.length}`);
  });

  it('says which part is missing instead of sending a zip cut short', async () => {
    const run = await finishedRun('Missing part deck', 2);
    const card = await server.deps.db('run_cards').where({ run_id: run.id, source: 'card-01.png' }).first('info');
    await server.deps.runs.storage.remove(card.info.renderKey);
    const res = await download(run.id, 'bundle.zip');
    expect(res.status).toBe(500);
    const body = await res.json();
    expect(body.error.code).toBe('BUNDLE_PART_MISSING');
    expect(body.error.message).toContain('cards/card-01.png');
  });

  it('stores a real zip when the singles are not the renders themselves (JPEG)', async () => {
    const run = await finishedRun('Jpeg deck', 2, { outputs: { singles: 'jpeg', pdf: true, sheets: null, proof: false } });
    const bundleKey = storageKeys.runFile(fx.workspaceId, run.id, 'bundle.zip');
    expect(await server.deps.runs.storage.exists(bundleKey)).toBe(true);
    expect(await server.deps.runs.storage.exists(`${bundleKey}.parts.json`)).toBe(false);
    const dir = await mkdtemp(path.join(tmpdir(), 'bw-bundle-'));
    try {
      const file = path.join(dir, 'bundle.zip');
      await writeFile(file, Buffer.from(await (await download(run.id, 'bundle.zip')).arrayBuffer()));
      expect(execFileSync('unzip', ['-t', file], { encoding: 'utf8' })).toMatch(/No errors detected/);
      expect(execFileSync('zipinfo', ['-1', file], { encoding: 'utf8' })).toContain('cards/card-01.jpg');
    } finally {
      await rm(dir, { recursive: true, force: true });
    }
  });
});
