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
import { seedDemo, type DemoAccount } from './seed.ts';
import { startQueue, type Queue } from '../jobs/boss.ts';

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
  sessionSecret: string;
  publicUrl?: string;
  cookieSecure?: boolean;
  trustProxy?: boolean;
  seed?: boolean;
  /** Attach job handlers in this process (the default). */
  work?: boolean;
  logger?: Logger;
}

export interface RunningServer {
  url: string;
  deps: AppDeps;
  queue: Queue;
  mailCatcher: MailCatcher | null;
  demo: { workspaceId: string; accounts: DemoAccount[] } | null;
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
  const queue = await startQueue({ databaseUrl: opts.databaseUrl, work: opts.work, onError: (err) => logger.error({ err }, 'pg-boss') });
  const mailCatcher = 'catcherPort' in opts.mail ? await startMailCatcher({ port: opts.mail.catcherPort }) : null;
  const mailer = createSmtpMailer({
    host: 'catcherPort' in opts.mail ? '127.0.0.1' : opts.mail.smtpHost,
    port: mailCatcher ? mailCatcher.port : (opts.mail as { smtpPort: number }).smtpPort,
    from: opts.mailFrom ?? 'Bleedwright <no-reply@bleedwright.example.test>',
  });
  const sessionPool = new pg.Pool({ connectionString: opts.databaseUrl, max: 5 });
  const deps: AppDeps = {
    db,
    sessionPool,
    mailer,
    mailbox: mailCatcher,
    queue,
    logger,
    clock: () => new Date(),
    storageRoot: opts.storageRoot,
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
  return {
    url,
    deps,
    queue,
    mailCatcher,
    demo,
    async close() {
      server.closeAllConnections();
      await new Promise<void>((resolve) => server.close(() => resolve()));
      await mailCatcher?.close();
      await queue.stop();
      await sessionPool.end();
      await db.destroy();
    },
  };
}
