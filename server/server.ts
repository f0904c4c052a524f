import type { AddressInfo } from 'node:net';
import { createServer, type Server } from 'node:http';
import { mkdirSync } from 'node:fs';
import pg from 'pg';
import { createApp } from './app.ts';
import type { AppDeps } from './context.ts';
import { createDb, migrateLatest } from './db/knex.ts';
import { createLogger, type Logger } from './logger.ts';
import { createSmtpMailer } from './mail.ts';
import { startMailCatcher, type MailCatcher } from './mail-catcher.ts';
import { seedDemo, seedRunsDemo, type DemoAccount } from './seed.ts';
import { startQueue, type ManyOptions, type Queue } from '../jobs/boss.ts';
import { installRunsRuntime, runsConfigFromEnv, type RunsConfig } from '../jobs/runs/runtime.ts';
import { localStorage, type Storage } from './storage.ts';
import { startInbox, type Inbox } from './services/inbox.ts';

export interface ServerOptions {
  databaseUrl: string;
  host?: string;
  /** 0 picks a free port. */
  port: number;
  /** Run the local mail catcher on this port (0 = free port), or send to this SMTP server instead. */
  mail: { catcherPort: number } | { smtpHost: string; smtpPort: number };
  mailFrom?: string;
  clientDir: string | null;
  storageRoot: string;
  /** Storage backend (object storage from `storageFromEnv`); local disk under `storageRoot` when absent. */
  storage?: Storage;
  sessionSecret: string;
  publicUrl?: string;
  cookieSecure?: boolean;
  trustProxy?: boolean;
  seed?: boolean;
  /** Attach job handlers in this process (the default). */
  work?: boolean;
  /** Run settings over the environment's (BLEEDWRIGHT_* variables). */
  runs?: Partial<RunsConfig>;
  /** Watch an inbox folder (null: no inbox). */
  inbox?: { root: string; stableMs?: number } | null;
  logger?: Logger;
}

export interface RunningServer {
  url: string;
  deps: AppDeps;
  queue: Queue;
  mailCatcher: MailCatcher | null;
  demo: { workspaceId: string; accounts: DemoAccount[] } | null;
  inbox: Inbox | null;
  close(): Promise<void>;
}

/** Migrates, seeds (optionally), starts pg-boss, the mail catcher and the HTTP server. */
export async function startServer(opts: ServerOptions): Promise<RunningServer> {
  const logger = opts.logger ?? createLogger();
  const host = opts.host ?? '127.0.0.1';
  mkdirSync(opts.storageRoot, { recursive: true });
  const db = createDb(opts.databaseUrl);
  await migrateLatest(db);
  const demo = opts.seed ? await seedDemo(db) : null;
  const mailCatcher = 'catcherPort' in opts.mail ? await startMailCatcher({ port: opts.mail.catcherPort }) : null;
  const mailer = createSmtpMailer({
    host: 'catcherPort' in opts.mail ? '127.0.0.1' : opts.mail.smtpHost,
    port: mailCatcher ? mailCatcher.port : (opts.mail as { smtpPort: number }).smtpPort,
    from: opts.mailFrom ?? 'Bleedwright <no-reply@bleedwright.example.test>',
  });
  const runsConfig: RunsConfig = { ...runsConfigFromEnv(), ...opts.runs };
  const storage = opts.storage ?? localStorage(opts.storageRoot);
  let queueRef: Queue | null = null;
  const send = async (name: string, data: object, options: Record<string, unknown> = {}) => {
    if (!queueRef) throw new Error('The job queue is not started yet');
    return queueRef.offer(name, data, options);
  };
  const sendMany = async (name: string, jobs: ReadonlyArray<{ data: object; options?: ManyOptions }>) => {
    if (!queueRef) throw new Error('The job queue is not started yet');
    return queueRef.offerMany(name, jobs);
  };
  let publicUrl = opts.publicUrl ?? '';
  // The run jobs read this runtime; installed before pg-boss starts working queues in this process.
  installRunsRuntime({ db, storage, config: runsConfig, mailer, publicUrl: () => publicUrl, logger, send, sendMany });
  const queue = await startQueue({
    databaseUrl: opts.databaseUrl,
    work: opts.work,
    onError: (err) => logger.error({ err }, 'pg-boss'),
    bossOptions: { maintenanceIntervalSeconds: runsConfig.maintenanceSeconds, schema: runsConfig.bossSchema },
  });
  queueRef = queue;
  if (demo) {
    await seedRunsDemo({ db, storage, tmpDir: runsConfig.tmpDir, send }, demo.workspaceId).catch((err) => logger.warn({ err }, 'runs demo data not seeded'));
  }
  const sessionPool = new pg.Pool({ connectionString: opts.databaseUrl, max: 5 });
  // An idle connection cut by a database restart emits here; unheard, it would end the process. The
  // pool drops that connection and opens a new one on the next request.
  sessionPool.on('error', (err) => logger.warn({ err }, 'session store connection lost'));
  const deps: AppDeps = {
    db,
    sessionPool,
    mailer,
    mailbox: mailCatcher,
    queue,
    logger,
    clock: () => new Date(),
    storageRoot: opts.storageRoot,
    runs: { storage, config: runsConfig, send },
    config: {
      publicUrl: opts.publicUrl ?? '',
      sessionSecret: opts.sessionSecret,
      cookieSecure: opts.cookieSecure ?? false,
      clientDir: opts.clientDir,
      trustProxy: opts.trustProxy ?? false,
    },
  };
  const server: Server = createServer(createApp(deps));
  await new Promise<void>((resolve, reject) => {
    server.once('error', reject);
    server.listen(opts.port, host, () => {
      server.off('error', reject);
      resolve();
    });
  });
  const url = `http://${host}:${(server.address() as AddressInfo).port}`;
  deps.config.publicUrl ||= url;
  publicUrl = deps.config.publicUrl;
  const inbox = opts.inbox ? startInbox({ db, storage, tmpDir: runsConfig.tmpDir, send, logger }, opts.inbox) : null;
  return {
    url,
    deps,
    queue,
    mailCatcher,
    demo,
    inbox,
    async close() {
      await inbox?.close();
      server.closeAllConnections();
      await new Promise<void>((resolve) => server.close(() => resolve()));
      await mailCatcher?.close();
      await queue.stop();
      await sessionPool.end();
      await db.destroy();
    },
  };
}
