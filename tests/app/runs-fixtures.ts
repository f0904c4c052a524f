// Shared pieces for the runs tests: small generated card art, zips, multipart uploads with the
// actor's cookie and CSRF token, and waiting for a run to settle.
import { spawn, type ChildProcess } from 'node:child_process';
import { createWriteStream } from 'node:fs';
import { mkdtemp, readdir } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { randomBytes } from 'node:crypto';
import sharp from 'sharp';
import yazl from 'yazl';
import type { RecipeInput } from '../../shared/recipe.ts';
import { startServer, type RunningServer } from '../../server/server.ts';
import { createLogger } from '../../server/logger.ts';
import type { RunsConfig } from '../../jobs/runs/runtime.ts';
import { afterAll, beforeAll } from 'vitest';
import { createWorkspaceFixture, type Actor, type Reply, type WorkspaceFixture } from './fixtures.ts';

/** A recipe that renders fast: poker trim at 100 DPI (275 x 375 px pages). */
export function smallRecipe(name: string, extra: Partial<RecipeInput> = {}): RecipeInput {
  return { name, trim: 'poker', dpi: 100, outputs: { singles: 'png', pdf: true, sheets: null, proof: true }, ...extra };
}

/** A card image with its own colour and a band whose position depends on `variant`. */
export async function cardPng(seed: number, variant = 0, size = { w: 250, h: 350 }): Promise<Buffer> {
  const hue = (seed * 47) % 256;
  const band = Math.round(((variant * 37 + seed * 11) % 90) + 20);
  const svg = `<svg xmlns="http://www.w3.org/2000/svg" width="${size.w}" height="${size.h}">
    <rect width="100%" height="100%" fill="rgb(${hue},${(hue * 3) % 256},${255 - hue})"/>
    <rect x="10" y="${band}" width="${size.w - 20}" height="30" fill="rgb(${variant * 60 % 256},20,40)"/>
    <circle cx="${(seed * 13) % size.w}" cy="${size.h / 2}" r="${20 + (seed % 30)}" fill="white"/></svg>`;
  return sharp(Buffer.from(svg)).png().toBuffer();
}

export async function zipOf(files: Record<string, Buffer>, dir?: string): Promise<string> {
  const folder = dir ?? (await mkdtemp(path.join(tmpdir(), 'bw-zip-')));
  const out = path.join(folder, `art-${randomBytes(4).toString('hex')}.zip`);
  const zip = new yazl.ZipFile();
  for (const [name, data] of Object.entries(files)) zip.addBuffer(data, name, { mtime: new Date(Date.UTC(2021, 0, 1)) });
  zip.end();
  await new Promise<void>((resolve, reject) => {
    zip.outputStream.pipe(createWriteStream(out)).on('close', () => resolve()).on('error', reject);
  });
  return out;
}

export async function cardSet(count: number, variants: Record<number, number> = {}): Promise<Record<string, Buffer>> {
  const files: Record<string, Buffer> = {};
  for (let i = 1; i <= count; i++) files[`card-${String(i).padStart(2, '0')}.png`] = await cardPng(i, variants[i] ?? 0);
  return files;
}

/** POSTs multipart form data as the actor (cookie + CSRF token). */
export async function upload(actor: Actor, url: string, parts: Array<{ field: string; name: string; data: Buffer }>, fields: Record<string, string> = {}): Promise<Reply> {
  const form = new FormData();
  for (const [k, v] of Object.entries(fields)) form.append(k, v);
  for (const p of parts) form.append(p.field, new Blob([new Uint8Array(p.data)]), p.name);
  const headers: Record<string, string> = {};
  if (actor.cookie) headers.Cookie = actor.cookie;
  if (actor.csrfToken) headers['X-CSRF-Token'] = actor.csrfToken;
  const res = await fetch(actor.baseUrl + url, { method: 'POST', headers, body: form });
  const text = await res.text();
  let body: unknown = null;
  try {
    body = text ? JSON.parse(text) : null;
  } catch {
    body = text;
  }
  return { status: res.status, body, headers: res.headers };
}

/** Polls the run until it is terminal (or the time is up) and returns its detail. */
export async function waitForRun(actor: Actor, workspaceId: string, runId: string, timeoutMs = 90_000, until: (run: any) => boolean = (r) => ['done', 'failed', 'canceled'].includes(r.state)): Promise<any> {
  const end = Date.now() + timeoutMs;
  let run: any = null;
  while (Date.now() < end) {
    run = (await actor.get(`/api/workspaces/${workspaceId}/runs/${runId}`)).body.run;
    if (until(run)) return run;
    await new Promise((r) => setTimeout(r, 250));
  }
  throw new Error(`run ${runId} did not settle in time: ${JSON.stringify(run)}`);
}

export async function filesIn(dir: string): Promise<string[]> {
  try {
    return await readdir(dir);
  } catch {
    return [];
  }
}

/** A test server with its own storage and temp folders and fast job polling. */
export async function startRunsServer(opts: { runs?: Partial<RunsConfig>; work?: boolean; inbox?: { root: string; stableMs?: number } | null } = {}): Promise<{ server: RunningServer; storageRoot: string; tmpDir: string; bossSchema: string; stop: () => Promise<void> }> {
  const base = await mkdtemp(path.join(tmpdir(), 'bw-runs-'));
  const storageRoot = path.join(base, 'storage');
  const tmpDir = path.join(base, 'tmp');
  // Its own job schema: other test servers (and other suites sharing the test cluster) never take its jobs.
  const bossSchema = `pgboss_t${randomBytes(4).toString('hex')}`;
  const server = await startServer({
    databaseUrl: process.env.DATABASE_URL!,
    port: 0,
    mail: { catcherPort: 0 },
    clientDir: null,
    storageRoot,
    sessionSecret: randomBytes(16).toString('hex'),
    seed: false,
    work: opts.work,
    inbox: opts.inbox ?? null,
    logger: createLogger('silent'),
    runs: { tmpDir, pollingSeconds: 0.5, maintenanceSeconds: 1, bossSchema, ...opts.runs },
  });
  const stop = async () => {
    const databaseUrl = process.env.DATABASE_URL!;
    await server.close();
    const pg = (await import('pg')).default;
    const client = new pg.Client({ connectionString: databaseUrl });
    await client.connect();
    await client.query(`drop schema if exists ${bossSchema} cascade`);
    await client.end();
  };
  return { server, storageRoot, tmpDir, bossSchema, stop };
}

/**
 * Starts a worker process (`npm run worker`) against a runs server's database, storage and job schema,
 * with short polling so tests move quickly; resolves once it says it is ready. `extraEnv` sets
 * expiries and the like. The child joins `children` as soon as it is spawned, so a test's cleanup
 * also kills one that never became ready.
 */
export async function startWorkerProcess(ctx: { server: RunningServer; storageRoot: string; bossSchema: string }, extraEnv: Record<string, string>, children: ChildProcess[]): Promise<ChildProcess> {
  const child = spawn(process.execPath, ['--import', 'tsx', 'jobs/worker-main.ts'], {
    env: {
      ...process.env,
      DATABASE_URL: process.env.DATABASE_URL,
      BLEEDWRIGHT_STORAGE: ctx.storageRoot,
      BLEEDWRIGHT_BOSS_SCHEMA: ctx.bossSchema,
      BLEEDWRIGHT_SMTP_PORT: String(ctx.server.mailCatcher!.port),
      BLEEDWRIGHT_PUBLIC_URL: ctx.server.url,
      BLEEDWRIGHT_JOB_POLL_SECONDS: '0.5',
      BLEEDWRIGHT_JOB_MAINTENANCE_SECONDS: '1',
      BLEEDWRIGHT_WORKER_CONCURRENCY: '2',
      LOG_LEVEL: 'warn',
      ...extraEnv,
    },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  children.push(child);
  let errors = '';
  child.stderr!.on('data', (d) => (errors += d));
  await new Promise<void>((resolve, reject) => {
    const timer = setTimeout(() => reject(new Error(`worker did not start: ${errors}`)), 30_000);
    child.stdout!.on('data', (d) => {
      if (String(d).includes('worker ready')) {
        clearTimeout(timer);
        resolve();
      }
    });
    child.once('exit', (code) => reject(new Error(`worker exited with ${code}: ${errors}`)));
  });
  return child;
}

/** A runs server with one workspace of owner, maker and helper, and its API prefix. */
export interface RunsWorkspace {
  server: RunningServer;
  fx: WorkspaceFixture;
  api: string;
}

/**
 * Starts a runs server and a workspace before the file's tests (beforeAll) and stops it after them
 * (afterAll); `set` receives them, e.g. `useRunsWorkspace((w) => ({ server, fx, api } = w))`.
 */
export function useRunsWorkspace(set: (w: RunsWorkspace) => void): void {
  let stop: (() => Promise<void>) | undefined;
  beforeAll(async () => {
    const started = await startRunsServer();
    stop = started.stop;
    const fx = await createWorkspaceFixture(started.server.deps.db, started.server.url);
    set({ server: started.server, fx, api: `/api/workspaces/${fx.workspaceId}` });
  });
  afterAll(() => stop?.());
}
