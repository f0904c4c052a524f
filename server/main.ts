// The app's process for `npm start`: API, built client, job workers and the demo mail catcher.
// scripts/start.mjs prepares PostgreSQL and the client build, then imports this file.
import { randomBytes } from 'node:crypto';
import { existsSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { resolve } from 'node:path';
import { createLogger } from './logger.ts';
import { startServer, type RunningServer } from './server.ts';
import { storageFromEnv } from './storage-config.ts';
import { startFakeS3ForDemo } from './storage-fake.ts';

function sessionSecret(dataDir: string): string {
  if (process.env.SESSION_SECRET) return process.env.SESSION_SECRET;
  const file = resolve(dataDir, 'session-secret');
  if (!existsSync(file)) {
    mkdirSync(dataDir, { recursive: true });
    writeFileSync(file, randomBytes(32).toString('base64url'), { mode: 0o600 });
  }
  return readFileSync(file, 'utf8').trim();
}

const databaseUrl = process.env.DATABASE_URL;
if (!databaseUrl) {
  console.error('DATABASE_URL is not set: run `npm start`, which prepares the database first.');
  process.exit(2);
}
const dataDir = resolve(process.env.BLEEDWRIGHT_DATA ?? '.data');
const logger = createLogger();
const smtpUrl = process.env.SMTP_URL ? new URL(process.env.SMTP_URL) : null;

// BLEEDWRIGHT_S3_FAKE=1: try object storage on one machine with a local fake S3 (README: Object storage).
const fakeS3 = process.env.BLEEDWRIGHT_S3_FAKE === '1' ? await startFakeS3ForDemo(process.env, dataDir) : null;

let running: RunningServer;
try {
  running = await startServer({
    databaseUrl,
    host: process.env.HOST ?? '127.0.0.1',
    port: Number(process.env.PORT ?? 4400),
    mail: smtpUrl
      ? { smtpHost: smtpUrl.hostname, smtpPort: Number(smtpUrl.port || 25) }
      : { catcherPort: Number(process.env.BLEEDWRIGHT_SMTP_PORT ?? 4425) },
    clientDir: resolve('dist'),
    storageRoot: resolve(process.env.BLEEDWRIGHT_STORAGE ?? `${dataDir}/storage`),
    // Local disk unless BLEEDWRIGHT_S3_BUCKET names a bucket (README: Object storage).
    storage: storageFromEnv(process.env, `${dataDir}/storage`),
    sessionSecret: sessionSecret(dataDir),
    publicUrl: process.env.BLEEDWRIGHT_PUBLIC_URL,
    cookieSecure: process.env.BLEEDWRIGHT_SECURE_COOKIES === '1',
    trustProxy: process.env.BLEEDWRIGHT_TRUST_PROXY === '1',
    seed: process.env.BLEEDWRIGHT_SEED !== '0',
    // Zips dropped into INBOX/<workspace-slug>/<recipe-slug>/ start runs; BLEEDWRIGHT_INBOX=0 turns it off.
    inbox: process.env.BLEEDWRIGHT_INBOX === '0' ? null : { root: resolve(process.env.BLEEDWRIGHT_INBOX ?? 'INBOX') },
    logger,
  });
} catch (err) {
  const e = err as NodeJS.ErrnoException & { port?: number };
  if (e.code === 'EADDRINUSE') {
    console.error(`Port ${e.port ?? ''} is in use: is Bleedwright already running? Stop it, or set PORT / BLEEDWRIGHT_SMTP_PORT.`);
    process.exit(1);
  }
  throw err;
}

const line = '-'.repeat(64);
const shownUrl = running.deps.config.publicUrl.replace(/\/$/, '');
const out = [line, `Bleedwright is running at ${shownUrl}`];
if (running.mailCatcher) out.push(`Captured mail (owners): ${shownUrl}/w/${running.demo?.workspaceId ?? ''}/mail  (SMTP 127.0.0.1:${running.mailCatcher.port})`);
if (fakeS3) out.push(`Object storage: local fake S3 at ${fakeS3.endpoint}, bucket "${process.env.BLEEDWRIGHT_S3_BUCKET}" (files under ${dataDir}/s3)`);
if (running.inbox) out.push(`Inbox folder: ${resolve(process.env.BLEEDWRIGHT_INBOX ?? 'INBOX')}/<workspace-slug>/<recipe-slug>/*.zip`);
if (running.demo) {
  out.push('', 'Demo sign-ins (workspace "Tidewhistle Orchard"):');
  for (const a of running.demo.accounts) out.push(`  ${a.role.padEnd(7)} ${a.email.padEnd(24)} password: ${a.password}`);
}
out.push(line);
console.log(out.join('\n'));

let stopping = false;
async function stop() {
  if (stopping) return;
  stopping = true;
  await running.close().catch(() => {});
  await fakeS3?.close().catch(() => {});
  process.exit(0);
}
process.once('SIGINT', stop);
process.once('SIGTERM', stop);
