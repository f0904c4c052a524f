// A bounded load test on loopback (issue 6): the server runs as its own process (`server/main.ts`, as
// `npm start` runs it, API and workers together) so its memory is measured alone; this process makes N
// art set zips of random-noise card images (incompressible, so the bytes are real), uploads them all
// at once, then starts R runs at once and waits for every one. Peak memory is the kernel's high-water
// mark of the server process (VmHWM in /proc/<pid>/status), sampled resident size alongside.
import { spawn, type ChildProcess } from 'node:child_process';
import { randomBytes } from 'node:crypto';
import { createWriteStream, openAsBlob } from 'node:fs';
import { mkdtemp, readFile, rm, stat } from 'node:fs/promises';
import { createServer } from 'node:net';
import { tmpdir } from 'node:os';
import path from 'node:path';
import sharp from 'sharp';
import yazl from 'yazl';
import { createDb } from '../../server/db/knex.ts';
import { upsertMembership } from '../../server/db/memberships.ts';
import { insertWorkspace } from '../../server/db/workspaces.ts';
import { Actor, createUser } from '../app/fixtures.ts';

export type LoadOptions = {
  databaseUrl: string;
  uploads: number;
  zipMegabytes: number;
  runs: number;
  /** Card images per zip (the zip's size is split between them). */
  cardsPerZip: number;
  dpi: number;
  log?: (line: string) => void;
  timeoutMs?: number;
};

export type LoadResult = {
  uploads: { count: number; zipBytes: number; seconds: number; statuses: number[]; artSets: number };
  runs: { count: number; seconds: number; states: string[]; cards: number[] };
  /**
   * Server process memory in MB. `hwmMb` is the kernel's high-water mark (VmHWM); the kernel keeps RSS
   * counts per thread and folds them in now and then, so a sample can pass it by a few MB: `peakRssMb`
   * is the larger of the two.
   */
  server: { peakRssMb: number; hwmMb: number; sampledMaxRssMb: number; baselineRssMb: number };
};

async function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const srv = createServer();
    srv.listen(0, '127.0.0.1', () => {
      const { port } = srv.address() as { port: number };
      srv.close(() => resolve(port));
    });
    srv.on('error', reject);
  });
}

function memory(pid: number): Promise<{ rss: number; hwm: number }> {
  return readFile(`/proc/${pid}/status`, 'utf8').then((text) => {
    const kb = (key: string) => Number(new RegExp(`^${key}:\\s+(\\d+) kB`, 'm').exec(text)?.[1] ?? 0);
    return { rss: kb('VmRSS') / 1024, hwm: kb('VmHWM') / 1024 };
  });
}

/**
 * `cards` noise PNGs adding up to at least `megabytes` MiB (8-bit RGB noise does not compress), made once
 * and put in every zip: encoding noise is the slow part, and the server's work per zip is the same.
 */
async function noiseCards(megabytes: number, cards: number): Promise<Buffer[]> {
  const perCard = (megabytes * 1024 * 1024) / cards;
  // Portrait art at the poker proportions (5:7), sized so the raw pixels alone are perCard bytes.
  const w = Math.ceil(Math.sqrt(perCard / 3 / 1.4));
  const h = Math.ceil(w * 1.4);
  const out: Buffer[] = [];
  for (let i = 0; i < cards; i++) {
    out.push(await sharp(randomBytes(w * h * 3), { raw: { width: w, height: h, channels: 3 } }).png({ compressionLevel: 1 }).toBuffer());
  }
  return out;
}

/**
 * A zip of the cards stored (not deflated) under names of their own: every zip has other bytes, so
 * uploads are not deduplicated, and other card names, so no run takes another run's cached renders.
 */
async function cardZip(file: string, cards: Buffer[], label: string): Promise<void> {
  const zip = new yazl.ZipFile();
  cards.forEach((png, i) => zip.addBuffer(png, `${label}-card-${String(i + 1).padStart(2, '0')}.png`, { compress: false }));
  zip.end();
  await new Promise<void>((resolve, reject) => zip.outputStream.pipe(createWriteStream(file)).on('close', () => resolve()).on('error', reject));
}

async function startServerProcess(opts: { databaseUrl: string; dataDir: string; bossSchema: string }): Promise<{ child: ChildProcess; url: string }> {
  const port = await freePort();
  const smtp = await freePort();
  const child = spawn(process.execPath, ['--import', 'tsx', 'server/main.ts'], {
    env: {
      ...process.env,
      DATABASE_URL: opts.databaseUrl,
      PORT: String(port),
      HOST: '127.0.0.1',
      BLEEDWRIGHT_SMTP_PORT: String(smtp),
      BLEEDWRIGHT_DATA: opts.dataDir,
      BLEEDWRIGHT_SEED: '0',
      BLEEDWRIGHT_INBOX: '0',
      BLEEDWRIGHT_BOSS_SCHEMA: opts.bossSchema,
      BLEEDWRIGHT_JOB_POLL_SECONDS: '0.5',
      LOG_LEVEL: 'warn',
    },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  let output = '';
  child.stderr!.on('data', (d) => (output += d));
  await new Promise<void>((resolve, reject) => {
    const timer = setTimeout(() => reject(new Error(`server did not start: ${output}`)), 60_000);
    child.stdout!.on('data', (d) => {
      output += d;
      if (output.includes('Bleedwright is running at')) {
        clearTimeout(timer);
        resolve();
      }
    });
    child.once('exit', (code) => reject(new Error(`server exited with ${code}: ${output}`)));
  });
  return { child, url: `http://127.0.0.1:${port}` };
}

async function uploadFile(actor: Actor, url: string, file: string): Promise<{ status: number; id: string | null }> {
  const form = new FormData();
  form.append('file', await openAsBlob(file), path.basename(file));
  const res = await fetch(actor.baseUrl + url, { method: 'POST', headers: { Cookie: actor.cookie!, 'X-CSRF-Token': actor.csrfToken! }, body: form });
  const body = (await res.json()) as { artSet?: { id: string } };
  return { status: res.status, id: body.artSet?.id ?? null };
}

/** Runs the load; always stops the server process and removes its files. */
export async function runLoad(opts: LoadOptions): Promise<LoadResult> {
  const log = opts.log ?? (() => {});
  const work = await mkdtemp(path.join(tmpdir(), 'bw-load-'));
  const bossSchema = `pgboss_load${randomBytes(3).toString('hex')}`;
  const db = createDb(opts.databaseUrl);
  let child: ChildProcess | null = null;
  let sampler: NodeJS.Timeout | null = null;
  try {
    log(`making ${opts.uploads} zips of ${opts.zipMegabytes} MB`);
    const cards = await noiseCards(opts.zipMegabytes, opts.cardsPerZip);
    const zips: string[] = [];
    for (let i = 0; i < opts.uploads; i++) {
      const label = `set${String(i + 1).padStart(2, '0')}`;
      const file = path.join(work, `${label}.zip`);
      await cardZip(file, cards, label);
      zips.push(file);
    }
    const zipBytes = Math.min(...(await Promise.all(zips.map(async (z) => (await stat(z)).size))));

    const started = await startServerProcess({ databaseUrl: opts.databaseUrl, dataDir: path.join(work, 'data'), bossSchema });
    child = started.child;
    const pid = child.pid!;
    const baseline = await memory(pid);
    let sampledMax = baseline.rss;
    sampler = setInterval(() => {
      memory(pid)
        .then((m) => (sampledMax = Math.max(sampledMax, m.rss)))
        .catch(() => {});
    }, 100);

    const suffix = randomBytes(4).toString('hex');
    const ws = await insertWorkspace(db, { name: `Load studio ${suffix}`, slug: `load-studio-${suffix}` });
    const maker = await createUser(db, 'load-maker');
    await upsertMembership(db, ws.id, maker.id, 'maker');
    const actor = await Actor.signedIn(started.url, maker.email);
    const api = `/api/workspaces/${ws.id}`;

    log(`uploading ${opts.uploads} zips at once`);
    const t0 = performance.now();
    const uploaded = await Promise.all(zips.map((z) => uploadFile(actor, `${api}/art-sets`, z)));
    const uploadSeconds = (performance.now() - t0) / 1000;

    const recipe = (await actor.post(`${api}/recipes`, { settings: { name: 'Load deck', trim: 'poker', dpi: opts.dpi, outputs: { singles: 'png', pdf: true, sheets: null, proof: true } } })).body.recipe;
    log(`starting ${opts.runs} runs at once`);
    const t1 = performance.now();
    const artSets = uploaded.filter((u) => u.id).slice(0, opts.runs);
    const starts = await Promise.all(artSets.map((u) => actor.post(`${api}/runs`, { recipeId: recipe.id, artSetId: u.id })));
    const runIds = starts.map((s) => s.body?.run?.id as string).filter(Boolean);
    const end = Date.now() + (opts.timeoutMs ?? 600_000);
    let runs: Array<{ state: string; progress: { done: number } }> = [];
    while (Date.now() < end) {
      runs = await Promise.all(runIds.map(async (id) => (await actor.get(`${api}/runs/${id}`)).body.run));
      if (runs.every((r) => ['done', 'failed', 'canceled'].includes(r.state))) break;
      await new Promise((r) => setTimeout(r, 500));
    }
    const runSeconds = (performance.now() - t1) / 1000;
    const final = await memory(pid);
    return {
      uploads: { count: uploaded.length, zipBytes, seconds: uploadSeconds, statuses: uploaded.map((u) => u.status), artSets: new Set(uploaded.map((u) => u.id).filter(Boolean)).size },
      runs: { count: runIds.length, seconds: runSeconds, states: runs.map((r) => r.state), cards: runs.map((r) => r.progress.done) },
      server: {
        peakRssMb: Math.round(Math.max(final.hwm, sampledMax, final.rss)),
        hwmMb: Math.round(final.hwm),
        sampledMaxRssMb: Math.round(Math.max(sampledMax, final.rss)),
        baselineRssMb: Math.round(baseline.rss),
      },
    };
  } finally {
    if (sampler) clearInterval(sampler);
    if (child && child.exitCode === null) {
      const exited = new Promise((r) => child!.once('exit', r));
      child.kill('SIGTERM');
      const timer = setTimeout(() => child!.kill('SIGKILL'), 10_000);
      await exited;
      clearTimeout(timer);
    }
    await db.raw(`drop schema if exists ${bossSchema} cascade`).catch(() => {});
    await db.destroy();
    await rm(work, { recursive: true, force: true });
  }
}
