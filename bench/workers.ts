// A-workers: the same art through a real run: the app (API side only, no job handlers) on the bench's
// own embedded PostgreSQL, one `npm run worker` process doing every job (run-plan, run-render per card,
// run-assemble), started for each measured run. Timed from startRun to the run's `done`; memory and CPU
// are the worker process's. The run's bundle is a composed zip, streamed from storage at download: the
// rerun's is read once after it (to nowhere), and that time is reported beside the run, not in it.
import { spawn, type ChildProcess } from 'node:child_process';
import { randomBytes } from 'node:crypto';
import { link, mkdir, rm } from 'node:fs/promises';
import path from 'node:path';
import { ensureDatabase } from '../scripts/db.mjs';
import { MALLOC_ENV } from '../scripts/malloc-env.mjs';
import { Writable } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import { layoutKeyOf, openComposedZip } from '../server/composed-zip.ts';
import { findRunView } from '../server/db/runs.ts';
import { storageKeys } from '../server/storage.ts';
import { insertWorkspace } from '../server/db/workspaces.ts';
import { createLogger } from '../server/logger.ts';
import { startServer, type RunningServer } from '../server/server.ts';
import { importArtSetZip } from '../server/services/art-sets.ts';
import { createRecipe } from '../server/services/recipes.ts';
import { startRun } from '../server/services/runs.ts';
import type { RecipeInput } from '../shared/recipe.ts';
import { processCpuMs, sampleTreeRss } from './measure.ts';

export const BENCH_DB = { dataDir: '.data/bench', port: 54349, database: 'bleedwright_bench' };
const BOSS_SCHEMA = 'pgboss_bench';

export type WorkersBench = {
  start: () => Promise<void>;
  /** One full run of `zip` with a recipe of its own (so no render is cached); then, when asked, a rerun. */
  run: (zip: string, recipe: RecipeInput, label: string, fixedZip?: string | null) => Promise<WorkersResult>;
  stop: () => Promise<void>;
};

export type WorkersResult = {
  wallMs: number;
  cpuMs: number;
  peakBytes: number;
  state: string;
  rerun: { wallMs: number; state: string; cached: number; bundleDownload: { ms: number; bytes: number } } | null;
};

/** `bossSchema` keeps two benches on the one bench database from taking each other's jobs. */
export function workersBench(root: string, work: string, bossSchema = BOSS_SCHEMA): WorkersBench {
  let server: RunningServer | null = null;
  let worker: ChildProcess | null = null;
  let workspaceId = '';
  let databaseUrl = '';
  const storageRoot = path.join(work, 'storage');

  // Polls the run's state alone (one small row, every 50 ms: the bench's own load stays small next to the
  // worker's), and reads the full run view once it has ended.
  const waitForRun = async (runId: string, timeoutMs: number) => {
    const end = Date.now() + timeoutMs;
    for (;;) {
      const row = await server!.deps.db('runs').where({ id: runId }).first('state');
      if (row && ['done', 'failed', 'canceled'].includes(row.state)) return (await findRunView(server!.deps.db, workspaceId, runId))!;
      if (Date.now() > end) throw new Error(`the run did not finish in ${timeoutMs / 1000} s (state ${row?.state})`);
      await new Promise((r) => setTimeout(r, 50));
    }
  };

  // A worker process of its own for each measured run, started just before it (as the CLI's process is):
  // a worker left idle through the other sides' runs came back measurably slower on this VM.
  const startWorker = async () => {
    // BENCH_WORKER_NODE_ARGS: extra node options for the worker (say --cpu-prof), to see where its time goes.
    const nodeArgs = (process.env.BENCH_WORKER_NODE_ARGS ?? '').split(' ').filter(Boolean);
    worker = spawn(process.execPath, [...nodeArgs, '--import', 'tsx', 'jobs/worker-main.ts'], {
      cwd: root,
      env: {
        ...process.env,
        // As `npm run worker` starts it (package.json).
        ...MALLOC_ENV,
        DATABASE_URL: databaseUrl,
        BLEEDWRIGHT_STORAGE: storageRoot,
        BLEEDWRIGHT_BOSS_SCHEMA: bossSchema,
        BLEEDWRIGHT_SMTP_PORT: String(server!.mailCatcher?.port ?? 4425),
        BLEEDWRIGHT_PUBLIC_URL: server!.url,
        BLEEDWRIGHT_JOB_POLL_SECONDS: '0.5',
        BLEEDWRIGHT_TMP: path.join(work, 'tmp'),
        LOG_LEVEL: 'warn',
      },
      stdio: ['ignore', 'pipe', 'pipe'],
    });
    let errors = '';
    worker.stderr!.on('data', (d) => (errors += d));
    await new Promise<void>((resolve, reject) => {
      const timer = setTimeout(() => reject(new Error(`the worker did not start: ${errors}`)), 60_000);
      worker!.stdout!.on('data', (d) => {
        if (String(d).includes('worker ready')) {
          clearTimeout(timer);
          resolve();
        }
      });
      worker!.once('exit', (code) => reject(new Error(`the worker exited with ${code}: ${errors.slice(-500)}`)));
    });
  };

  const stopWorker = async () => {
    if (worker && worker.exitCode === null) {
      worker.kill('SIGTERM');
      await new Promise((r) => worker!.once('exit', r));
    }
    worker = null;
  };

  // Reads the run's composed bundle as a download does (parts checked, then streamed), to nowhere.
  const downloadBundle = async (runId: string) => {
    const t0 = performance.now();
    const zip = await openComposedZip(server!.deps.runs.storage, layoutKeyOf(storageKeys.runFile(workspaceId, runId, 'bundle.zip')));
    let bytes = 0;
    await pipeline(zip.read(0, zip.size - 1), new Writable({ write: (chunk: Buffer, _enc, done) => ((bytes += chunk.length), done()) }));
    if (bytes !== zip.size) throw new Error(`the composed bundle gave ${bytes} bytes, not ${zip.size}`);
    return { ms: Math.round(performance.now() - t0), bytes };
  };

  const importZip = async (zip: string, name: string, artSetId?: string) => {
    // importArtSetZip moves (or removes) its temp file: give it a hard link of the bench zip.
    const temp = path.join(work, `upload-${randomBytes(4).toString('hex')}.zip`);
    await link(zip, temp);
    return importArtSetZip({ db: server!.deps.db, storage: server!.deps.runs.storage, tmpDir: path.join(work, 'tmp') }, { workspaceId, userId: null, tempFile: temp, name, artSetId });
  };

  return {
    async start() {
      databaseUrl = await ensureDatabase({ ...BENCH_DB, dataDir: path.join(root, BENCH_DB.dataDir) });
      await rm(storageRoot, { recursive: true, force: true });
      await mkdir(path.join(work, 'tmp'), { recursive: true });
      server = await startServer({
        databaseUrl,
        port: 0,
        mail: { catcherPort: 0 },
        clientDir: null,
        storageRoot,
        sessionSecret: randomBytes(16).toString('hex'),
        seed: false,
        work: false,
        inbox: null,
        logger: createLogger('silent'),
        runs: { tmpDir: path.join(work, 'tmp'), pollingSeconds: 0.5, maintenanceSeconds: 5, bossSchema },
      });
      const ws = await insertWorkspace(server.deps.db, { name: 'Bench workspace', slug: `bench-${randomBytes(4).toString('hex')}` });
      workspaceId = ws.id;
    },

    async run(zip, recipe, label, fixedZip = null) {
      const db = server!.deps.db;
      const send = server!.deps.runs.send;
      const created = await createRecipe(db, workspaceId, null, { ...recipe, name: `${recipe.name} ${label} ${randomBytes(3).toString('hex')}` });
      const art = await importZip(zip, `bench ${label}`);
      await startWorker();
      const pid = worker!.pid!;
      const sampler = sampleTreeRss(pid);
      const cpu0 = processCpuMs(pid);
      const t0 = performance.now();
      const runId = await startRun({ db, send }, { workspaceId, userId: null, recipeId: created.id, artSetId: art.artSetId, revision: art.revision });
      const run = await waitForRun(runId, 60 * 60_000);
      const wallMs = performance.now() - t0;
      const cpuMs = processCpuMs(pid) - cpu0;
      const peakBytes = sampler.stop();
      let rerun: WorkersResult['rerun'] = null;
      if (fixedZip) {
        const fixed = await importZip(fixedZip, `bench ${label}`, art.artSetId);
        const r0 = performance.now();
        const rerunId = await startRun({ db, send }, { workspaceId, userId: null, recipeId: created.id, artSetId: art.artSetId, revision: fixed.revision });
        const again = await waitForRun(rerunId, 60 * 60_000);
        const rerunMs = Math.round(performance.now() - r0);
        rerun = { wallMs: rerunMs, state: again.state, cached: again.counts?.cached ?? 0, bundleDownload: await downloadBundle(rerunId) };
      }
      await stopWorker();
      return { wallMs: Math.round(wallMs), cpuMs, peakBytes, state: run.state, rerun };
    },

    async stop() {
      await stopWorker();
      await server?.close();
    },
  };
}
