// Worker processes (`npm run worker`, here `node --import tsx jobs/worker-main.ts`) against the same
// database, storage and job schema as the app: one is killed with SIGKILL mid-run and another finishes
// the run with every card exactly once; two together finish a run with no card rendered twice; workers
// that would poll only once a minute are woken by the jobs other processes send.
import { execFileSync, type ChildProcess } from 'node:child_process';
import { readFile } from 'node:fs/promises';
import { afterAll, afterEach, beforeAll, describe, expect, it } from 'vitest';
import type { RunningServer } from '../../server/server.ts';
import { storageKeys } from '../../server/storage.ts';
import { createWorkspaceFixture, type WorkspaceFixture } from './fixtures.ts';
import { cardSet, smallRecipe, startRunsServer, startWorkerProcess, upload, waitForRun, zipOf } from './runs-fixtures.ts';

let server: RunningServer;
let fx: WorkspaceFixture;
let api: string;
let stop: () => Promise<void>;
let storageRoot: string;
let bossSchema: string;
const children: ChildProcess[] = [];

// Short expiry so the killed worker's active jobs come back within seconds (pg-boss 10: an active job
// whose worker died is retried by maintenance once expireIn has passed).
const EXPIRE_SECONDS = 3;

beforeAll(async () => {
  ({ server, stop, storageRoot, bossSchema } = await startRunsServer({ work: false, runs: { renderExpireSeconds: EXPIRE_SECONDS } }));
  fx = await createWorkspaceFixture(server.deps.db, server.url);
  api = `/api/workspaces/${fx.workspaceId}`;
});
afterEach(() => {
  for (const c of children.splice(0)) if (c.exitCode === null && c.signalCode === null) c.kill('SIGKILL');
});
afterAll(() => stop?.());

function startWorker(): Promise<ChildProcess> {
  return startWorkerProcess({ server, storageRoot, bossSchema }, { BLEEDWRIGHT_RENDER_EXPIRE_SECONDS: String(EXPIRE_SECONDS) }, children);
}

async function queuedRun(name: string, cards: number, dpi: number) {
  const recipe = (await fx.actors.maker.post(`${api}/recipes`, { settings: smallRecipe(name, { dpi }) })).body.recipe;
  const zip = await readFile(await zipOf(await cardSet(cards)));
  const art = (await upload(fx.actors.maker, `${api}/art-sets`, [{ field: 'file', name: `${name}.zip`, data: zip }])).body.artSet;
  const start = await fx.actors.maker.post(`${api}/runs`, { recipeId: recipe.id, artSetId: art.id });
  expect(start.status).toBe(201);
  return start.body.run.id as string;
}

/** The end-of-run mail, sent by a worker process to the app's mail catcher. Waiting for it also
 * means no SMTP session is cut when the workers are stopped. */
async function runMail(runId: string) {
  for (let i = 0; i < 200; i++) {
    const mail = server.mailCatcher!.list().find((m) => m.text.includes(runId));
    if (mail) return mail;
    await new Promise((r) => setTimeout(r, 50));
  }
  throw new Error(`no mail for run ${runId}`);
}

function pdfPages(file: string): number {
  return Number(/^Pages:\s+(\d+)$/m.exec(execFileSync('pdfinfo', [file], { encoding: 'utf8' }))![1]);
}

describe('worker processes', () => {
  it('finish a run after one is killed with SIGKILL mid-run, every card exactly once', async () => {
    const CARDS = 24;
    const runId = await queuedRun('Killed worker deck', CARDS, 300);
    const first = await startWorker();
    // Kill once some cards are done and others are still open.
    const partway = await waitForRun(fx.actors.maker, fx.workspaceId, runId, 60_000, (r) => r.progress.done >= 3 || r.state === 'done');
    first.kill('SIGKILL');
    await new Promise((r) => first.once('exit', r));
    expect(partway.state).toBe('running');
    expect(partway.progress.done).toBeLessThan(CARDS);

    await startWorker();
    const run = await waitForRun(fx.actors.maker, fx.workspaceId, runId, 90_000);
    expect(run.state).toBe('done');
    expect(run.progress).toMatchObject({ total: CARDS, done: CARDS, skipped: 0, failed: 0 });

    const rows = await server.deps.db('run_cards').where({ run_id: runId }).select('source', 'role', 'state');
    expect(rows).toHaveLength(CARDS);
    expect(new Set(rows.map((r) => `${r.role}:${r.source}`)).size).toBe(CARDS);
    expect(rows.every((r) => r.state === 'done')).toBe(true);

    const ws = fx.workspaceId;
    const pdf = run.outputs.find((o: { kind: string }) => o.kind === 'pdf').name;
    expect(pdfPages(server.deps.runs.storage.path(storageKeys.runFile(ws, runId, pdf)))).toBe(CARDS);
    const report = JSON.parse(await readFile(server.deps.runs.storage.path(storageKeys.runFile(ws, runId, 'report.json')), 'utf8'));
    expect(report.cards).toHaveLength(CARDS);
    expect(new Set(report.cards.map((c: { source: string }) => c.source)).size).toBe(CARDS);
    expect(report.outputs.singles).toBe(CARDS);
    expect((await runMail(runId)).subject).toMatch(/^Run done:/);
  });

  it('two workers together finish a run with no card rendered twice', async () => {
    const CARDS = 20;
    await Promise.all([startWorker(), startWorker()]);
    const runId = await queuedRun('Two workers deck', CARDS, 200);
    const run = await waitForRun(fx.actors.maker, fx.workspaceId, runId, 90_000);
    expect(run.state).toBe('done');
    const renders = await server.deps.db('render_log').where({ run_id: runId }).select('card_id', 'pid');
    expect(renders).toHaveLength(CARDS);
    expect(new Set(renders.map((r) => r.card_id)).size).toBe(CARDS);
    const pids = new Set(renders.map((r) => r.pid));
    expect(pids.has(process.pid)).toBe(false); // the app process does not work jobs here
    expect((await server.deps.db('run_cards').where({ run_id: runId, state: 'done' })).length).toBe(CARDS);
    expect((await runMail(runId)).text).toContain(`Cards: ${CARDS} (done ${CARDS}`);
  });

  it('a worker that polls once a minute is woken by a run the app sends, and by renders another worker plans', async () => {
    const CARDS = 12;
    // Neither worker would find a job by polling within this test: each is woken by a NOTIFY (LISTEN on
    // its own connection) from the process that sent the job, the app (run-plan) or the other worker (run-render).
    const slow = { BLEEDWRIGHT_RENDER_EXPIRE_SECONDS: String(EXPIRE_SECONDS), BLEEDWRIGHT_JOB_POLL_SECONDS: '60' };
    await Promise.all([startWorkerProcess({ server, storageRoot, bossSchema }, slow, children), startWorkerProcess({ server, storageRoot, bossSchema }, slow, children)]);
    const runId = await queuedRun('Woken workers deck', CARDS, 300);
    const run = await waitForRun(fx.actors.maker, fx.workspaceId, runId, 40_000);
    expect(run.state).toBe('done');
    const renders = await server.deps.db('render_log').where({ run_id: runId }).select('card_id', 'pid');
    expect(new Set(renders.map((r) => r.card_id)).size).toBe(CARDS);
    // Both took renders: the one that did not plan was woken by the other's render jobs.
    expect(new Set(renders.map((r) => r.pid)).size).toBe(2);
    expect((await runMail(runId)).subject).toMatch(/^Run done:/);
  });
});
