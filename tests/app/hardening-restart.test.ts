// PostgreSQL stopped and started again in the middle of a run (issue 6). Uses a cluster of its own
// under .data/test-restart on its own port, never the shared test cluster other files use. The app
// process (API + workers) must ride it out: pools reconnect, pg-boss retries the jobs that were active
// when the database went away, and the run completes with every card exactly once.
import { randomBytes } from 'node:crypto';
import { mkdtemp, readFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ensureDatabase, stopDatabase } from '../../scripts/db.mjs';
import { createLogger } from '../../server/logger.ts';
import { startServer, type RunningServer } from '../../server/server.ts';
import { createWorkspaceFixture, type WorkspaceFixture } from './fixtures.ts';
import { cardSet, smallRecipe, upload, waitForRun, zipOf } from './runs-fixtures.ts';

const DATA_DIR = '.data/test-restart';
const PORT = Number(process.env.BLEEDWRIGHT_TEST_RESTART_PG_PORT ?? 54371);
const CARDS = 12;

let server: RunningServer | null = null;
let fx: WorkspaceFixture;
const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

/** ensureDatabase skips all work when DATABASE_URL is set (it is, for the shared cluster). */
async function ensureRestartCluster(): Promise<string> {
  const saved = process.env.DATABASE_URL;
  delete process.env.DATABASE_URL;
  try {
    return await ensureDatabase({ dataDir: DATA_DIR, port: PORT, database: 'bleedwright_restart', log: () => {} });
  } finally {
    process.env.DATABASE_URL = saved;
  }
}

beforeAll(async () => {
  const databaseUrl = await ensureRestartCluster();
  const base = await mkdtemp(path.join(tmpdir(), 'bw-restart-'));
  server = await startServer({
    databaseUrl,
    port: 0,
    mail: { catcherPort: 0 },
    clientDir: null,
    storageRoot: path.join(base, 'storage'),
    sessionSecret: randomBytes(16).toString('hex'),
    seed: false,
    logger: createLogger('silent'),
    runs: { tmpDir: path.join(base, 'tmp'), pollingSeconds: 0.5, maintenanceSeconds: 1, renderExpireSeconds: 3, bossSchema: `pgboss_r${randomBytes(3).toString('hex')}` },
  });
  fx = await createWorkspaceFixture(server.deps.db, server.url);
}, 120_000);

afterAll(async () => {
  await server?.close().catch(() => {});
  stopDatabase({ dataDir: DATA_DIR });
});

/** Reads the run straight from the database, riding out the moments it is not there. */
async function runRow(runId: string): Promise<{ state: string } | null> {
  try {
    return await server!.deps.db('runs').where({ id: runId }).first('state');
  } catch {
    return null;
  }
}

describe('PostgreSQL restarted during a run', () => {
  it('the workers reconnect and the run completes with every card exactly once', { timeout: 180_000 }, async () => {
    const api = `/api/workspaces/${fx.workspaceId}`;
    const recipe = (await fx.actors.maker.post(`${api}/recipes`, { settings: smallRecipe('Fogbell deck', { dpi: 300 }) })).body.recipe;
    const zip = await readFile(await zipOf(await cardSet(CARDS)));
    const art = (await upload(fx.actors.maker, `${api}/art-sets`, [{ field: 'file', name: 'fogbell.zip', data: zip }])).body.artSet;
    const start = await fx.actors.maker.post(`${api}/runs`, { recipeId: recipe.id, artSetId: art.id });
    expect(start.status).toBe(201);
    const runId = start.body.run.id;
    const partway = await waitForRun(fx.actors.maker, fx.workspaceId, runId, 60_000, (r) => r.progress.done >= 2 || r.state === 'done');
    expect(partway.state).toBe('running');

    stopDatabase({ dataDir: DATA_DIR });
    // While it is down the API says so instead of hanging or crashing.
    const down = await fetch(`${server!.url}/api/health`);
    expect(down.status).toBe(503);
    await sleep(1500);
    await ensureRestartCluster();

    let state: string | undefined;
    const end = Date.now() + 150_000;
    while (Date.now() < end) {
      state = (await runRow(runId))?.state;
      if (state && state !== 'running' && state !== 'queued') break;
      await sleep(500);
    }
    expect(state).toBe('done');
    const run = await waitForRun(fx.actors.maker, fx.workspaceId, runId);
    expect(run.progress).toMatchObject({ total: CARDS, done: CARDS, skipped: 0, failed: 0 });
    const rows = await server!.deps.db('run_cards').where({ run_id: runId }).select('source', 'state');
    expect(rows).toHaveLength(CARDS);
    expect(new Set(rows.map((r) => r.source)).size).toBe(CARDS);
    expect((await fetch(`${server!.url}/api/health`)).status).toBe(200);
    // Sessions live in PostgreSQL too: the maker is still signed in.
    expect((await fx.actors.maker.get('/api/session')).body.user.email).toBe(fx.users.maker.email);
  });
});
