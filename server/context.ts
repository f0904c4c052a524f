import type { Knex } from 'knex';
import type pg from 'pg';
import type { Logger } from './logger.ts';
import type { Mailer } from './mail.ts';
import type { Mailbox } from './mail-catcher.ts';
import type { Storage } from './storage.ts';
import type { RunsConfig } from '../jobs/runs/runtime.ts';
import type { SignInLimits } from './services/sign-in-limits.ts';

export interface AppConfig {
  /** Where people reach the app; used in links sent by e-mail. */
  publicUrl: string;
  sessionSecret: string;
  /** Mark the session cookie `secure` (set when served over https). */
  cookieSecure: boolean;
  /** Folder with the built client (`dist/`), or null to serve the API only. */
  clientDir: string | null;
  /** Trust X-Forwarded-* from one proxy hop (behind an https proxy). */
  trustProxy: boolean;
  /** Sign-in guessing limits; the defaults (`SIGN_IN_LIMITS`) when absent. Tests set short lock-outs. */
  signInLimits?: SignInLimits;
}

/** Everything the app touches outside itself, so tests can start it against the test database. */
export interface AppDeps {
  db: Knex;
  /** pg pool for the session store (connect-pg-simple wants a node-postgres pool). */
  sessionPool: pg.Pool;
  mailer: Mailer;
  /** The demo mail catcher's captured mail; null when mail goes to a real server. */
  mailbox: Mailbox | null;
  queue: { healthy(): Promise<boolean> } | null;
  logger: Logger;
  clock: () => Date;
  storageRoot: string;
  config: AppConfig;
  /** Runs (issue 4): file storage, upload and worker settings, and a way to send jobs. */
  runs: {
    storage: Storage;
    config: RunsConfig;
    /** Sends a job; null when pg-boss dropped it as a duplicate (singletonKey). */
    send: (name: string, data: object, options?: Record<string, unknown>) => Promise<string | null>;
  };
}

export type ServiceContext = Pick<AppDeps, 'db' | 'mailer' | 'clock' | 'config'>;
