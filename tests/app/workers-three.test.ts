// Three worker processes (`npm run worker`, i.e. tsx jobs/worker-main.ts), each with its own working folder and no
// shared disk: the app and the workers reach files only through a fake S3 (s3rver on 127.0.0.1). They
// finish one run together: every card rendered once, the run assembled once, the PDF whole.
import { spawn, execFileSync, type ChildProcess } from 'node:child_process';
import { randomBytes } from 'node:crypto';
import { existsSync } from 'node:fs';
import { mkdtemp, readFile, readdir, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createLogger } from '../../server/logger.ts';
import { startServer, type RunningServer } from '../../server/server.ts';
import { s3Storage } from '../../server/storage-s3.ts';
import { createWorkspaceFixture, type WorkspaceFixture } from './fixtures.ts';
import { cardSet, smallRecipe, upload, waitForRun, zipOf } from './runs-fixtures.ts';
import { startFakeS3, type FakeS3 } from './storage-fake-s3.ts';

const CARDS = 12;
let fake: FakeS3;
let server: RunningServer;
let fx: WorkspaceFixture;
let base: string;
const bossSchema = `pgboss_t${randomBytes(4).toString('hex')}`;
const children: ChildProcess[] = [];

beforeAll(async () => {
  fake = await startFakeS3();
  base = await mkdtemp(path.join(tmpdir(), 'bw-three-'));
  server = await startServer({
    databaseUrl: process.env.DATABASE_URL!,
    port: 0,
    mail: { catcherPort: 0 },
    clientDir: null,
    // Never written: with object storage on, the app keeps no files of its own here.
    storageRoot: path.join(base, 'app-storage-unused'),
    storage: s3Storage({ bucket: fake.bucket, endpoint: fake.endpoint, credentials: fake.credentials }),
    sessionSecret: randomBytes(16).toString('hex'),
    seed: false,
    work: false,
    logger: createLogger('silent'),
    runs: { tmpDir: path.join(base, 'app-tmp'), workDir: path.join(base, 'app-work'), pollingSeconds: 0.5, maintenanceSeconds: 1, bossSchema },
  });
  fx = await createWorkspaceFixture(server.deps.db, server.url);
});

afterAll(async () => {
  for (const c of children) if (c.exitCode === null && c.signalCode === null) c.kill('SIGTERM');
  await Promise.all(children.map((c) => (c.exitCode === null && c.signalCode === null ? new Promise((r) => c.once('exit', r)) : null)));
  await server?.close();
  const pg = (await import('pg')).default;
  const client = new pg.Client({ connectionString: process.env.DATABASE_URL });
  await client.connect();
  await client.query(`drop schema if exists ${bossSchema} cascade`);
  await client.end();
  await fake?.close();
  await rm(base, { recursive: true, force: true });
});

/** One worker as an extra machine would run it: its own data, temp and work folders, storage only in S3. */
async function startWorker(n: number): Promise<{ child: ChildProcess; workDir: string }> {
  const own = path.join(base, `worker-${n}`);
  const workDir = path.join(own, 'work');
  // `npx tsx jobs/worker-main.ts` without the npx wrapper, so the pid is the worker's own.
  const child = spawn(process.execPath, ['--import', 'tsx', 'jobs/worker-main.ts'], {
    env: {
      ...process.env,
      ...fake.env,
      DATABASE_URL: process.env.DATABASE_URL,
      BLEEDWRIGHT_DATA: own,
      BLEEDWRIGHT_STORAGE: path.join(own, 'storage-unused'),
      BLEEDWRIGHT_TMP: path.join(own, 'tmp'),
      BLEEDWRIGHT_WORK_DIR: workDir,
      BLEEDWRIGHT_BOSS_SCHEMA: bossSchema,
      BLEEDWRIGHT_SMTP_PORT: String(server.mailCatcher!.port),
      BLEEDWRIGHT_PUBLIC_URL: server.url,
      BLEEDWRIGHT_JOB_POLL_SECONDS: '0.5',
      BLEEDWRIGHT_JOB_MAINTENANCE_SECONDS: '1',
      BLEEDWRIGHT_WORKER_CONCURRENCY: '1',
      BLEEDWRIGHT_SHARP_THREADS: '1',
      LOG_LEVEL: 'warn',
    },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  children.push(child);
  let errors = '';
  child.stderr!.on('data', (d) => (errors += d));
  await new Promise<void>((resolve, reject) => {
    const timer = setTimeout(() => reject(new Error(`worker ${n} did not start: ${errors}`)), 60_000);
    child.stdout!.on('data', (d) => {
      if (String(d).includes('worker ready')) {
        clearTimeout(timer);
        resolve();
      }
    });
    child.once('exit', (code) => reject(new Error(`worker ${n} exited with ${code}: ${errors}`)));
  });
  return { child, workDir };
}

async function filesUnder(dir: string): Promise<string[]> {
  if (!existsSync(dir)) return [];
  return (await readdir(dir, { recursive: true, withFileTypes: true })).filter((e) => e.isFile()).map((e) => path.join(e.parentPath, e.name));
}

describe('three workers on object storage', () => {
  it('finish one run together: every card rendered once, the run assembled once', async () => {
    const workers = await Promise.all([1, 2, 3].map(startWorker));
    const api = `/api/workspaces/${fx.workspaceId}`;
    const recipe = (await fx.actors.maker.post(`${api}/recipes`, { settings: smallRecipe('Three workers deck', { dpi: 200 }) })).body.recipe;
    const art = (await upload(fx.actors.maker, `${api}/art-sets`, [{ field: 'file', name: 'three.zip', data: await readFile(await zipOf(await cardSet(CARDS))) }])).body.artSet;
    const start = await fx.actors.maker.post(`${api}/runs`, { recipeId: recipe.id, artSetId: art.id });
    expect(start.status).toBe(201);
    const runId: string = start.body.run.id;

    const run = await waitForRun(fx.actors.maker, fx.workspaceId, runId, 150_000);
    expect(run.state).toBe('done');
    expect(run.progress).toMatchObject({ total: CARDS, done: CARDS, failed: 0 });

    // Every card rendered exactly once, by the worker processes only (the app works no jobs here).
    const renders = await server.deps.db('render_log').where({ run_id: runId }).select('card_id', 'pid');
    expect(renders).toHaveLength(CARDS);
    expect(new Set(renders.map((r) => r.card_id)).size).toBe(CARDS);
    const workerPids = new Set(workers.map((w) => w.child.pid));
    expect(renders.every((r) => workerPids.has(r.pid))).toBe(true);
    expect(new Set(renders.map((r) => r.pid)).size).toBeGreaterThanOrEqual(2);

    // Assembled once: one completed assemble job for the run and one end-of-run mail.
    // (The run is done inside the handler, a moment before pg-boss marks that job completed.)
    const assembleJobs = async () =>
      (await server.deps.db.raw(`select state from ${bossSchema}.job where name = 'run-assemble' and data->>'runId' = ?`, [runId])).rows.map((r: { state: string }) => r.state);
    let states = await assembleJobs();
    for (let i = 0; i < 100 && !states.includes('completed'); i++) {
      await new Promise((r) => setTimeout(r, 100));
      states = await assembleJobs();
    }
    expect(states).toEqual(['completed']);
    let mails = 0;
    for (let i = 0; i < 100 && mails === 0; i++) {
      mails = server.mailCatcher!.list().filter((m) => m.text.includes(runId)).length;
      if (!mails) await new Promise((r) => setTimeout(r, 50));
    }
    expect(mails).toBe(1);

    // No shared disk: nothing under the local storage folders; each worker's copies sit in its own work folder.
    expect(existsSync(path.join(base, 'app-storage-unused', 'ws'))).toBe(false);
    for (const w of workers) expect(existsSync(path.join(path.dirname(w.workDir), 'storage-unused', 'ws'))).toBe(false);
    const fetched = (await Promise.all(workers.map((w) => filesUnder(path.join(w.workDir, 'cache'))))).map((f) => f.length);
    expect(fetched.filter((n) => n > 0).length).toBeGreaterThanOrEqual(2);

    // The PDF comes from the store through a short-lived presigned URL (302 after the access check).
    const pdf = run.outputs.find((o: { kind: string }) => o.kind === 'pdf').name;
    const res = await fetch(`${server.url}${api}/runs/${runId}/files/${encodeURIComponent(pdf)}`, { headers: { Cookie: fx.actors.maker.cookie! }, redirect: 'manual' });
    expect(res.status).toBe(302);
    const location = res.headers.get('location')!;
    expect(location.startsWith(fake.endpoint)).toBe(true);
    const file = path.join(base, 'deck.pdf');
    await writeFile(file, Buffer.from(await (await fetch(location)).arrayBuffer()));
    // Card images are streamed through the app (the CSP allows images from 'self' only), made from the store.
    const card = (await server.deps.db('run_cards').where({ run_id: runId }).first('id')).id;
    const thumb = await fetch(`${server.url}${api}/runs/${runId}/cards/${card}/image?size=thumb`, { headers: { Cookie: fx.actors.maker.cookie! }, redirect: 'manual' });
    expect(thumb.status).toBe(200);
    expect(thumb.headers.get('content-type')).toBe('image/webp');
    expect(Buffer.from(await thumb.arrayBuffer()).subarray(8, 12).toString('latin1')).toBe('WEBP'); // RIFF container, WebP spec
    // The bundle is composed from the parts in the store and streamed through the app (no presigned
    // URL can join objects); unzip (Info-ZIP) checks every entry's CRC-32.
    const bundle = await fetch(`${server.url}${api}/runs/${runId}/files/bundle.zip`, { headers: { Cookie: fx.actors.maker.cookie! }, redirect: 'manual' });
    expect(bundle.status).toBe(200);
    const bundleFile = path.join(base, 'bundle.zip');
    await writeFile(bundleFile, Buffer.from(await bundle.arrayBuffer()));
    expect(execFileSync('unzip', ['-t', bundleFile], { encoding: 'utf8' })).toMatch(/No errors detected/);
    expect(execFileSync('unzip', ['-p', bundleFile, pdf], { maxBuffer: 256 * 1024 * 1024 }).equals(await readFile(file))).toBe(true);
    // pdfinfo (poppler-utils) as the outside check of the assembled file.
    expect(Number(/^Pages:\s+(\d+)$/m.exec(execFileSync('pdfinfo', [file], { encoding: 'utf8' }))![1])).toBe(CARDS);
  }, 240_000);
});
