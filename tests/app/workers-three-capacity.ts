// Capacity measurement for docs/CAPACITY.md (a script, not part of the suite):
//   DATABASE_URL=... npx tsx tests/app/workers-three-capacity.ts --workers 1,2 --cards 60
// Starts the API without job handlers, then for each worker count spawns that many `jobs/worker-main.ts`
// processes (concurrency and sharp threads from their defaults for this machine), runs one deck of
// print-size card art (825 x 1125 px, poker at 300 DPI with 1/8 in bleed, singles + PDF + sheets +
// proof) and prints cards per minute from the run's start to its end.
import { spawn, type ChildProcess } from 'node:child_process';
import { randomBytes } from 'node:crypto';
import { mkdtemp, readFile, rm } from 'node:fs/promises';
import { availableParallelism, tmpdir } from 'node:os';
import path from 'node:path';
import { createLogger } from '../../server/logger.ts';
import { startServer } from '../../server/server.ts';
import { createWorkspaceFixture } from './fixtures.ts';
import { cardPng, upload, waitForRun, zipOf } from './runs-fixtures.ts';
import { MALLOC_ENV } from '../../scripts/malloc-env.mjs';

const arg = (name: string, fallback: string) => {
  const i = process.argv.indexOf(`--${name}`);
  return i > 0 ? process.argv[i + 1]! : fallback;
};
const workerCounts = arg('workers', '1,2').split(',').map(Number);
const CARDS = Number(arg('cards', '60'));
const databaseUrl = process.env.DATABASE_URL;
if (!databaseUrl) throw new Error('Set DATABASE_URL (e.g. the npm start cluster)');

const base = await mkdtemp(path.join(tmpdir(), 'bw-capacity-'));
const storageRoot = path.join(base, 'storage');
const bossSchema = `pgboss_cap${randomBytes(3).toString('hex')}`;
const server = await startServer({
  databaseUrl,
  port: 0,
  mail: { catcherPort: 0 },
  clientDir: null,
  storageRoot,
  sessionSecret: randomBytes(16).toString('hex'),
  seed: false,
  work: false,
  logger: createLogger('silent'),
  runs: { tmpDir: path.join(base, 'tmp'), pollingSeconds: 0.5, maintenanceSeconds: 5, bossSchema },
});
const fx = await createWorkspaceFixture(server.deps.db, server.url);
const api = `/api/workspaces/${fx.workspaceId}`;

const files: Record<string, Buffer> = {};
for (let i = 1; i <= CARDS; i++) files[`card-${String(i).padStart(3, '0')}.png`] = await cardPng(i, 0, { w: 825, h: 1125 });

function startWorker(): Promise<ChildProcess> {
  const child = spawn(process.execPath, ['--import', 'tsx', 'jobs/worker-main.ts'], {
    // MALLOC_ENV: as `npm run worker` starts it (package.json).
    env: { ...process.env, ...MALLOC_ENV, BLEEDWRIGHT_STORAGE: storageRoot, BLEEDWRIGHT_WORK_DIR: path.join(base, `work-${randomBytes(3).toString('hex')}`), BLEEDWRIGHT_BOSS_SCHEMA: bossSchema, BLEEDWRIGHT_SMTP_PORT: String(server.mailCatcher!.port), BLEEDWRIGHT_JOB_POLL_SECONDS: '0.5', LOG_LEVEL: 'warn' },
    stdio: ['ignore', 'pipe', 'inherit'],
  });
  return new Promise((resolve, reject) => {
    child.stdout!.on('data', (d) => (String(d).includes('worker ready') ? resolve(child) : undefined));
    child.once('exit', (code) => reject(new Error(`worker exited ${code}`)));
  });
}

console.log(`cores ${availableParallelism()}, ${CARDS} cards per run`);
for (const n of workerCounts) {
  const workers = await Promise.all(Array.from({ length: n }, startWorker));
  // A new art set and recipe per measurement, so nothing comes from the render cache.
  const recipe = (await fx.actors.maker.post(`${api}/recipes`, {
    settings: { name: `Capacity ${n} ${randomBytes(2).toString('hex')}`, trim: 'poker', bleed: { size: 0.125, unit: 'in' }, dpi: 300, outputs: { singles: 'png', pdf: true, sheets: { paper: 'letter', marks: true }, proof: true } },
  })).body.recipe;
  files['salt.txt'] = randomBytes(8);
  const art = (await upload(fx.actors.maker, `${api}/art-sets`, [{ field: 'file', name: 'capacity.zip', data: await readFile(await zipOf(files)) }])).body.artSet;
  const t0 = Date.now();
  const start = await fx.actors.maker.post(`${api}/runs`, { recipeId: recipe.id, artSetId: art.id });
  const run = await waitForRun(fx.actors.maker, fx.workspaceId, start.body.run.id, 1_800_000);
  const seconds = (Date.now() - t0) / 1000;
  const pids = new Set((await server.deps.db('render_log').where({ run_id: run.id }).select('pid')).map((r) => r.pid));
  console.log(JSON.stringify({ workers: n, state: run.state, cards: run.progress.done, seconds: Math.round(seconds * 10) / 10, cardsPerMinute: Math.round((run.progress.done / seconds) * 60 * 10) / 10, renderingPids: pids.size }));
  for (const w of workers) w.kill('SIGTERM');
  await Promise.all(workers.map((w) => new Promise((r) => w.once('exit', r))));
}

await server.close();
const pg = (await import('pg')).default;
const client = new pg.Client({ connectionString: databaseUrl });
await client.connect();
await client.query(`drop schema if exists ${bossSchema} cascade`);
await client.end();
await rm(base, { recursive: true, force: true });
