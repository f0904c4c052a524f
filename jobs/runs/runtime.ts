// What the run jobs need from outside (database, storage, mail, config, a way to send jobs). The app
// process and `npm run worker` each install one before pg-boss starts working; handlers read it here.
import { availableParallelism } from 'node:os';
import type { Knex } from 'knex';
import sharp from 'sharp';
import type { Logger } from '../../server/logger.ts';
import type { Mailer } from '../../server/mail.ts';
import type { Storage } from '../../server/storage.ts';
import type { ManyOptions } from '../boss.ts';

export interface RunsConfig {
  /** Render jobs worked at once in one process. */
  workerConcurrency: number;
  /** libvips threads per sharp call (0 = sharp's default). */
  sharpThreads: number;
  /** pg-boss expiry of one render job: a killed worker's job is retried after this. */
  renderExpireSeconds: number;
  assembleExpireSeconds: number;
  /** How often pg-boss looks for new jobs and for expired ones. */
  pollingSeconds: number;
  maintenanceSeconds: number;
  /** Largest art set zip accepted by an upload. */
  uploadMaxBytes: number;
  /** Where uploads wait until they are checked. */
  tmpDir: string;
  /** This process's own working folder (renders in progress, assembly, copies fetched from object storage). */
  workDir: string;
  /** PostgreSQL schema of the job tables (tests give each server its own). */
  bossSchema: string;
}

export function runsConfigFromEnv(env: NodeJS.ProcessEnv = process.env): RunsConfig {
  const num = (name: string, fallback: number) => {
    const value = env[name];
    if (value === undefined || value === '') return fallback;
    const n = Number(value);
    if (!Number.isFinite(n) || n < 0) throw new Error(`${name} must be a number, got "${value}"`);
    return n;
  };
  // Defaults follow the machine, as the CLI's CARDS_IN_FLIGHT: one render more than the cores (counting at
  // most 4, as each holds a card's pixels in memory), so the cores stay busy while a render waits for the
  // JavaScript thread (zip read, hashing, database calls), and libvips threads split among them so
  // renders at once do not fight over the cores.
  const cores = Math.max(1, availableParallelism());
  const workerConcurrency = Math.max(1, Math.floor(num('BLEEDWRIGHT_WORKER_CONCURRENCY', Math.min(4, cores) + 1)));
  return {
    workerConcurrency,
    sharpThreads: Math.floor(num('BLEEDWRIGHT_SHARP_THREADS', Math.max(1, Math.round(cores / workerConcurrency)))),
    renderExpireSeconds: num('BLEEDWRIGHT_RENDER_EXPIRE_SECONDS', 300),
    assembleExpireSeconds: num('BLEEDWRIGHT_ASSEMBLE_EXPIRE_SECONDS', 1800),
    pollingSeconds: num('BLEEDWRIGHT_JOB_POLL_SECONDS', 1),
    maintenanceSeconds: num('BLEEDWRIGHT_JOB_MAINTENANCE_SECONDS', 30),
    uploadMaxBytes: Math.floor(num('BLEEDWRIGHT_UPLOAD_MAX_MB', 512) * 1024 * 1024),
    tmpDir: env.BLEEDWRIGHT_TMP ?? `${env.BLEEDWRIGHT_DATA ?? '.data'}/tmp`,
    workDir: env.BLEEDWRIGHT_WORK_DIR ?? `${env.BLEEDWRIGHT_DATA ?? '.data'}/work`,
    bossSchema: env.BLEEDWRIGHT_BOSS_SCHEMA ?? 'pgboss',
  };
}

export interface RunsRuntime {
  db: Knex;
  storage: Storage;
  config: RunsConfig;
  mailer: Mailer;
  /** Base URL for links in e-mail (read late: the server learns its port after start). */
  publicUrl: () => string;
  logger: Logger;
  /** Sends a job; null when pg-boss dropped it as a duplicate (singletonKey). */
  send: (name: string, data: object, options?: Record<string, unknown>) => Promise<string | null>;
  /** Sends many jobs of one queue in one statement (duplicates of a singletonKey are dropped). */
  sendMany: (name: string, jobs: ReadonlyArray<{ data: object; options?: ManyOptions }>) => Promise<void>;
}

let installed: RunsRuntime | null = null;

export function installRunsRuntime(runtime: RunsRuntime): void {
  installed = runtime;
  if (runtime.config.sharpThreads > 0) sharp.concurrency(runtime.config.sharpThreads);
  // Every image is used once: libvips's operation cache only holds memory (and costs a little CPU).
  sharp.cache(false);
}

export function runsRuntime(): RunsRuntime {
  if (!installed) throw new Error('Run jobs need installRunsRuntime() before pg-boss works them');
  return installed;
}
