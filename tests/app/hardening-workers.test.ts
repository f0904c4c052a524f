// Worker processes killed with SIGKILL (issue 6): once mid-render and once mid-assemble on the same
// run. The run still completes with every card exactly once, and its PDF and imposed sheets are
// byte-identical to the same recipe on the same art run undisturbed in another workspace.
import type { ChildProcess } from 'node:child_process';
import { createHash } from 'node:crypto';
import { readFile } from 'node:fs/promises';
import { afterAll, afterEach, beforeAll, describe, expect, it } from 'vitest';
import type { RunningServer } from '../../server/server.ts';
import { storageKeys } from '../../server/storage.ts';
import { createWorkspaceFixture, type WorkspaceFixture } from './fixtures.ts';
import { cardSet, smallRecipe, startRunsServer, startWorkerProcess, upload, waitForRun, zipOf } from './runs-fixtures.ts';

let server: RunningServer;
let stop: () => Promise<void>;
let storageRoot: string;
let bossSchema: string;
const children: ChildProcess[] = [];

// Short expiries so a killed worker's active job comes back within seconds (pg-boss 10 retries an
// active job whose worker died once expireIn has passed; REFERENCES.md "pg-boss 10").
const RENDER_EXPIRE_SECONDS = 3;
const ASSEMBLE_EXPIRE_SECONDS = 4;
const CARDS = 10;

beforeAll(async () => {
  ({ server, stop, storageRoot, bossSchema } = await startRunsServer({ work: false, runs: { renderExpireSeconds: RENDER_EXPIRE_SECONDS, assembleExpireSeconds: ASSEMBLE_EXPIRE_SECONDS } }));
});
afterEach(() => {
  for (const c of children.splice(0)) if (c.exitCode === null && c.signalCode === null) c.kill('SIGKILL');
});
afterAll(() => stop?.());

function startWorker(): Promise<ChildProcess> {
  return startWorkerProcess({ server, storageRoot, bossSchema }, { BLEEDWRIGHT_RENDER_EXPIRE_SECONDS: String(RENDER_EXPIRE_SECONDS), BLEEDWRIGHT_ASSEMBLE_EXPIRE_SECONDS: String(ASSEMBLE_EXPIRE_SECONDS) }, children);
}

async function kill(child: ChildProcess): Promise<void> {
  const exited = new Promise((r) => child.once('exit', r));
  child.kill('SIGKILL');
  await exited;
}

// Sheets and proof on, at print resolution: assembly takes long enough to be caught mid-way.
const recipe = () => smallRecipe('Lanternmoss deck', { dpi: 200, outputs: { singles: 'png', pdf: true, sheets: { paper: 'letter', marks: true }, proof: true } });

async function queuedRun(fx: WorkspaceFixture, zip: Buffer): Promise<string> {
  const api = `/api/workspaces/${fx.workspaceId}`;
  const r = (await fx.actors.maker.post(`${api}/recipes`, { settings: recipe() })).body.recipe;
  const art = (await upload(fx.actors.maker, `${api}/art-sets`, [{ field: 'file', name: 'lanternmoss.zip', data: zip }])).body.artSet;
  const start = await fx.actors.maker.post(`${api}/runs`, { recipeId: r.id, artSetId: art.id });
  expect(start.status).toBe(201);
  return start.body.run.id;
}

async function outputHashes(workspaceId: string, run: { id: string; outputs: Array<{ kind: string; name: string }> }): Promise<Record<string, string>> {
  const out: Record<string, string> = {};
  for (const kind of ['pdf', 'sheets']) {
    const name = run.outputs.find((o) => o.kind === kind)!.name;
    out[kind] = createHash('sha256').update(await readFile(server.deps.runs.storage.path(storageKeys.runFile(workspaceId, run.id, name)))).digest('hex');
  }
  return out;
}

/** Polls pg-boss's own job table until this run's assemble job is being worked. */
async function assembleActive(runId: string, timeoutMs: number): Promise<boolean> {
  const end = Date.now() + timeoutMs;
  while (Date.now() < end) {
    const { rows } = await server.deps.db.raw(`select 1 from ${bossSchema}.job where name = 'run-assemble' and state = 'active' and data->>'runId' = ?`, [runId]);
    if (rows.length > 0) return true;
    await new Promise((r) => setTimeout(r, 20));
  }
  return false;
}

describe('workers killed with SIGKILL', () => {
  it('mid-render and again mid-assemble: every card exactly once, outputs identical to an undisturbed run', async () => {
    const zip = await readFile(await zipOf(await cardSet(CARDS)));
    const calm = await createWorkspaceFixture(server.deps.db, server.url);
    const rough = await createWorkspaceFixture(server.deps.db, server.url);

    // The undisturbed run first, alone.
    const first = await startWorker();
    const calmRun = await waitForRun(calm.actors.maker, calm.workspaceId, await queuedRun(calm, zip), 120_000);
    expect(calmRun.state).toBe('done');

    // The same recipe and art in another workspace (no shared render cache), with two kills.
    const runId = await queuedRun(rough, zip);
    const partway = await waitForRun(rough.actors.maker, rough.workspaceId, runId, 60_000, (r) => r.progress.done >= 3 || r.state === 'done');
    await kill(first);
    expect(partway.state).toBe('running');
    expect(partway.progress.done).toBeLessThan(CARDS);

    const second = await startWorker();
    expect(await assembleActive(runId, 120_000)).toBe(true);
    await kill(second);
    const midAssemble = await server.deps.db('runs').where({ id: runId }).first('state', 'outputs');
    expect(midAssemble.state).toBe('running'); // killed before the run was marked done
    expect(midAssemble.outputs).toEqual([]);

    await startWorker();
    const run = await waitForRun(rough.actors.maker, rough.workspaceId, runId, 120_000);
    expect(run.state).toBe('done');
    expect(run.progress).toMatchObject({ total: CARDS, done: CARDS, skipped: 0, failed: 0 });

    const rows = await server.deps.db('run_cards').where({ run_id: runId }).select('source', 'role', 'state');
    expect(rows).toHaveLength(CARDS);
    expect(new Set(rows.map((r) => `${r.role}:${r.source}`)).size).toBe(CARDS);
    const report = JSON.parse(await readFile(server.deps.runs.storage.path(storageKeys.runFile(rough.workspaceId, runId, 'report.json')), 'utf8'));
    expect(report.cards.map((c: { source: string }) => c.source)).toEqual(Array.from({ length: CARDS }, (_, i) => `card-${String(i + 1).padStart(2, '0')}.png`));
    expect(report.outputs.singles).toBe(CARDS);

    expect(run.outputs.map((o: { name: string }) => o.name)).toEqual(calmRun.outputs.map((o: { name: string }) => o.name));
    expect(await outputHashes(rough.workspaceId, run)).toEqual(await outputHashes(calm.workspaceId, calmRun));
  });
});
