// Faults inside one process (issue 6): a render delivered again after its card settled (a stale
// attempt past its expiry) changes nothing; two runs started at once on one art set both complete
// with the same bytes; storage that cannot be written on output fails the run with a clear reason, and
// the run can be started again once storage is back. Worker processes killed mid-render and
// mid-assemble, and PostgreSQL restarts, are in hardening-workers.test.ts and hardening-restart.test.ts.
import { createHash } from 'node:crypto';
import { connect } from 'node:net';
import { readFile, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { renderRunCard } from '../../jobs/runs/render.ts';
import { installRunsRuntime, runsRuntime } from '../../jobs/runs/runtime.ts';
import { claimCard, findCard, settleCard } from '../../server/db/run-cards.ts';
import type { RunningServer } from '../../server/server.ts';
import { localStorage, storageKeys, type Storage } from '../../server/storage.ts';
import { createWorkspaceFixture, type WorkspaceFixture } from './fixtures.ts';
import { cardSet, smallRecipe, startRunsServer, upload, waitForRun, zipOf } from './runs-fixtures.ts';

let server: RunningServer;
let fx: WorkspaceFixture;
let stop: () => Promise<void>;
let api: string;

beforeAll(async () => {
  ({ server, stop } = await startRunsServer());
  fx = await createWorkspaceFixture(server.deps.db, server.url);
  api = `/api/workspaces/${fx.workspaceId}`;
});
afterAll(() => stop?.());

const sha = (buf: Buffer) => createHash('sha256').update(buf).digest('hex');

async function recipeAndArt(name: string, cards: number) {
  const recipe = (await fx.actors.maker.post(`${api}/recipes`, { settings: smallRecipe(name) })).body.recipe;
  const zip = await readFile(await zipOf(await cardSet(cards)));
  const art = (await upload(fx.actors.maker, `${api}/art-sets`, [{ field: 'file', name: `${name}.zip`, data: zip }])).body.artSet;
  return { recipeId: recipe.id as string, artSetId: art.id as string };
}

async function startRun(ids: { recipeId: string; artSetId: string }): Promise<string> {
  const res = await fx.actors.maker.post(`${api}/runs`, ids);
  expect(res.status).toBe(201);
  return res.body.run.id;
}

async function pdfOf(run: { id: string; outputs: Array<{ kind: string; name: string }> }): Promise<Buffer> {
  const name = run.outputs.find((o) => o.kind === 'pdf')!.name;
  return readFile(server.deps.runs.storage.path(storageKeys.runFile(fx.workspaceId, run.id, name)));
}

describe('stale render attempts', () => {
  it('a render delivered again after its card settled changes neither the card nor the render log', async () => {
    const runId = await startRun(await recipeAndArt('Stale deck', 2));
    const run = await waitForRun(fx.actors.maker, fx.workspaceId, runId);
    expect(run.state).toBe('done');
    const cards = await server.deps.db('run_cards').where({ run_id: runId }).orderBy('seq');
    const logBefore = await server.deps.db('render_log').where({ run_id: runId }).count<{ count: string }[]>('* as count');
    for (const c of cards) await renderRunCard(runsRuntime(), c.id, false);
    expect(await server.deps.db('run_cards').where({ run_id: runId }).orderBy('seq')).toEqual(cards);
    const logAfter = await server.deps.db('render_log').where({ run_id: runId }).count<{ count: string }[]>('* as count');
    expect(logAfter).toEqual(logBefore);
  });

  it('the attempt that overran its expiry cannot settle over the newer attempt’s result', async () => {
    const runId = await startRun(await recipeAndArt('Overrun deck', 1));
    await waitForRun(fx.actors.maker, fx.workspaceId, runId);
    const [card] = await server.deps.db('run_cards').where({ run_id: runId });
    const db = server.deps.db;
    // Put the card back as pg-boss sees it: attempt 1 claimed it and then ran past expireIn.
    await db('run_cards').where({ id: card.id }).update({ state: 'pending', attempt: 0 });
    const stale = await claimCard(db, card.id);
    const retry = await claimCard(db, card.id);
    expect([stale?.attempt, retry?.attempt]).toEqual([1, 2]);
    const newer = { state: 'done' as const, cached: false, outputs: [], info: { by: 'attempt 2' }, findings: [] };
    const older = { state: 'failed' as const, cached: false, outputs: [], info: { by: 'attempt 1' }, findings: [] };
    expect(await settleCard(db, card.id, newer)).toBe(true);
    expect(await settleCard(db, card.id, older)).toBe(false);
    const row = await findCard(db, card.id);
    expect(row).toMatchObject({ state: 'done', info: { by: 'attempt 2' }, attempt: 2 });
  });
});

describe('concurrent runs', () => {
  it('two runs started at once on one art set both complete with every card and the same PDF bytes', async () => {
    const ids = await recipeAndArt('Twin runs deck', 6);
    const [a, b] = await Promise.all([fx.actors.maker.post(`${api}/runs`, ids), fx.actors.owner.post(`${api}/runs`, ids)]);
    expect([a.status, b.status]).toEqual([201, 201]);
    expect(a.body.run.id).not.toBe(b.body.run.id);
    const [runA, runB] = await Promise.all([waitForRun(fx.actors.maker, fx.workspaceId, a.body.run.id), waitForRun(fx.actors.maker, fx.workspaceId, b.body.run.id)]);
    for (const run of [runA, runB]) {
      expect(run.state).toBe('done');
      expect(run.progress).toMatchObject({ total: 6, done: 6, skipped: 0, failed: 0 });
      const rows = await server.deps.db('run_cards').where({ run_id: run.id });
      expect(new Set(rows.map((r) => r.source)).size).toBe(6);
    }
    expect(sha(await pdfOf(runA))).toBe(sha(await pdfOf(runB)));
    // The cache holds one render per card, whichever run made it.
    const cache = await server.deps.db('render_cache').where({ workspace_id: fx.workspaceId, recipe_version_id: (await server.deps.db('runs').where({ id: runA.id }).first()).recipe_version_id });
    expect(cache).toHaveLength(6);
  });
});

describe('unwritable storage on output', () => {
  it('fails the run with a clear reason, and a rerun after storage is back completes', async () => {
    const ids = await recipeAndArt('Blocked storage deck', 3);
    const rt = runsRuntime();
    // Run outputs go under a path whose parent is a regular file: every write fails with a real ENOTDIR.
    const blocker = path.join(tmpdir(), `bw-blocker-${process.pid}-${Date.now()}`);
    await writeFile(blocker, 'not a folder');
    const blocked = localStorage(path.join(blocker, 'storage'));
    const failing: Storage = {
      ...rt.storage,
      putFile: (key, file) => (key.includes('/runs/') ? blocked.putFile(key, file) : rt.storage.putFile(key, file)),
      put: (key, data) => (key.includes('/runs/') ? blocked.put(key, data) : rt.storage.put(key, data)),
    };
    installRunsRuntime({ ...rt, storage: failing });
    let failedRun;
    try {
      failedRun = await waitForRun(fx.actors.maker, fx.workspaceId, await startRun(ids));
    } finally {
      installRunsRuntime(rt);
    }
    expect(failedRun.state).toBe('failed');
    expect(failedRun.error).toMatch(/^ASSEMBLE_FAILED: /);
    expect(failedRun.error).toMatch(/storage/i);
    expect(failedRun.error).not.toContain(blocker); // no server paths in what a card maker reads
    expect(failedRun.outputs).toEqual([]);
    // Cards rendered fine; nothing half-written is listed.
    expect(failedRun.progress).toMatchObject({ total: 3, done: 3 });

    const rerun = await waitForRun(fx.actors.maker, fx.workspaceId, await startRun(ids));
    expect(rerun.state).toBe('done');
    expect(rerun.progress).toMatchObject({ total: 3, done: 3, cached: 3 });
    expect((await pdfOf(rerun)).subarray(0, 5).toString()).toBe('%PDF-');
  });
});

describe('mail catcher', () => {
  it('a mail client that resets its connection mid-conversation does not take the server down', async () => {
    const port = server.mailCatcher!.port;
    await new Promise<void>((resolve, reject) => {
      const socket = connect(port, '127.0.0.1');
      socket.on('error', () => {});
      socket.once('data', () => {
        socket.write('EHLO worker.example.test\r\nMAIL FROM:<a@example.test>\r\nRCPT TO:<b@example.test>\r\nDATA\r\nSubject: half\r\n\r\nhalf a mess');
        // TCP RST instead of a clean close, as a process killed with SIGKILL leaves it.
        setTimeout(() => {
          socket.resetAndDestroy();
          resolve();
        }, 100);
      });
      socket.once('close', () => resolve());
      setTimeout(() => reject(new Error('no SMTP greeting')), 5000);
    });
    await new Promise((r) => setTimeout(r, 300));
    expect((await fetch(`${server.url}/api/health`)).status).toBe(200);
    expect(server.mailCatcher!.list().some((m) => m.subject === 'half')).toBe(false);
  });
});
