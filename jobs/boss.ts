import { randomUUID } from 'node:crypto';
import { createRequire } from 'node:module';
import pg from 'pg';
import PgBoss from 'pg-boss';
import { JOBS, QUEUE_NAMES, checkRegistry, type JobDefinition, type QueueName } from './registry.ts';

// pg-boss 10 marks a worked job complete or failed without awaiting it (src/manager.js, work() ->
// onFetch), so when PostgreSQL is down at that moment the rejection goes unhandled and Node ends the
// process. The job itself is safe: it stays active, expires and is retried (handlers are idempotent).
// Marking each of those promises handled keeps the process up; callers that await them still see the error.
type ManagerProto = Record<'complete' | 'fail', (...args: unknown[]) => Promise<unknown>> & { __bwHandled?: boolean };
const managerProto = (createRequire(import.meta.url)('pg-boss/src/manager.js') as { prototype: ManagerProto }).prototype;
if (!managerProto.__bwHandled) {
  for (const method of ['complete', 'fail'] as const) {
    const original = managerProto[method];
    managerProto[method] = function (this: unknown, ...args: unknown[]) {
      const result = original.apply(this, args);
      result.catch(() => {});
      return result;
    };
  }
  managerProto.__bwHandled = true;
}

/** The send options pg-boss 10's insert() honours. */
export type ManyOptions = Pick<PgBoss.JobInsert, 'singletonKey' | 'retryLimit' | 'retryDelay' | 'retryBackoff' | 'expireInSeconds' | 'priority' | 'startAfter'>;

export interface Queue {
  boss: PgBoss;
  /** Sends a job and returns its id; throws when pg-boss drops it (missing queue or singleton). */
  send(name: QueueName, data: object, options?: PgBoss.SendOptions): Promise<string>;
  /**
   * Sends a job and wakes the workers of that queue at once, in this process and (LISTEN/NOTIFY) in every
   * other process working it; null when pg-boss drops it as a duplicate (singletonKey).
   */
  offer(name: string, data: object, options?: PgBoss.SendOptions): Promise<string | null>;
  /**
   * offer() for many jobs of one queue in one statement (pg-boss insert: the same singletonKey, retry and
   * expiry options as send; duplicates of a singletonKey are dropped).
   */
  offerMany(name: string, jobs: ReadonlyArray<{ data: object; options?: ManyOptions }>): Promise<void>;
  /** True when the queue tables answer. */
  healthy(): Promise<boolean>;
  stop(): Promise<void>;
}

/**
 * Starts pg-boss on the app's database (schema `pgboss`), creates every queue in the registry and,
 * unless `work` is false, attaches the handlers in this process.
 */
export async function startQueue(opts: {
  databaseUrl: string;
  work?: boolean;
  jobs?: JobDefinition[];
  names?: readonly string[];
  onError?: (err: Error) => void;
  /** Extra pg-boss constructor options (e.g. a short maintenance interval in tests). */
  bossOptions?: Omit<PgBoss.ConstructorOptions, 'connectionString'>;
}): Promise<Queue> {
  const jobs = opts.jobs ?? JOBS;
  checkRegistry(opts.names ?? QUEUE_NAMES, jobs);
  const schema = opts.bossOptions?.schema ?? 'pgboss';
  const onError = opts.onError ?? ((err: Error) => console.error('pg-boss error', err));
  const boss = new PgBoss({ max: 4, schema, ...opts.bossOptions, connectionString: opts.databaseUrl });
  boss.on('error', onError);
  await boss.start();
  // Worker ids by queue, for waking this process's workers when a job is sent from here.
  const local = new Map<string, string[]>();
  for (const job of jobs) {
    const { name: _name, ...queueOptions } = job.options;
    await boss.createQueue(job.name, { name: job.name, ...queueOptions });
    if (opts.work === false) continue;
    const { workers = 1, ...workOptions } = job.work ?? {};
    for (let i = 0; i < workers; i++) {
      // pg-boss 10 waits out the polling interval after every job, even with more queued; waking the
      // worker after a job that did something keeps a busy queue draining at full speed.
      let workerId = '';
      workerId = await boss.work(job.name, workOptions, async (jobs: PgBoss.Job<object>[]) => {
        try {
          return await job.handler(jobs);
        } finally {
          if (jobs.length > 0 && workerId) boss.notifyWorker(workerId);
        }
      });
      local.set(job.name, [...(local.get(job.name) ?? []), workerId]);
    }
  }
  /** Wakes this process's workers of one queue, or of every queue (null). */
  const wakeLocal = (name: string | null) => {
    for (const [queue, workerIds] of local) if (name === null || queue === name) for (const workerId of workerIds) boss.notifyWorker(workerId);
  };
  // pg-boss 10 only polls, and notifyWorker reaches this process only: a job sent elsewhere (run-plan
  // from the app, run-render from another worker's plan) would wait for a poll. A NOTIFY after each send
  // wakes the workers of that queue in every process listening on the same schema.
  const instance = randomUUID();
  const listener = opts.work === false || local.size === 0 ? null : listenForWakes({ databaseUrl: opts.databaseUrl, schema, instance, wake: wakeLocal, onError });
  const wakeOthers = async (name: string) => {
    try {
      await boss.getDb().executeSql('select pg_notify($1, $2)', [WAKE_CHANNEL, JSON.stringify({ schema, queue: name, from: instance } satisfies Wake)]);
    } catch (err) {
      onError(err as Error); // the job is stored: other processes still find it at their next poll
    }
  };
  return {
    boss,
    async send(name, data, options = {}) {
      const id = await boss.send(name, data, options);
      if (!id) throw new Error(`Queue "${name}" did not accept the job (missing queue or duplicate singleton)`);
      return id;
    },
    async offer(name, data, options = {}) {
      const id = await boss.send(name, data, options);
      // pg-boss 10 only polls: without this, a job sent to an idle queue waits up to a polling interval
      // even when this very process works that queue (plan -> renders -> assemble crosses it 3 times).
      // A worker already busy just fetches again when it finishes; an idle one without a job fetches nothing.
      if (id) {
        wakeLocal(name);
        await wakeOthers(name);
      }
      return id;
    },
    async offerMany(name, jobs) {
      if (jobs.length === 0) return;
      await boss.insert(
        jobs.map(({ data, options = {} }) => ({
          name,
          data,
          ...options,
          // insert() reads whole seconds (send() also takes fractions); never less than one.
          ...(options.expireInSeconds === undefined ? {} : { expireInSeconds: Math.max(1, Math.ceil(options.expireInSeconds)) }),
        })),
      );
      // pg-boss 10's insert() does not say which jobs it took (duplicates are dropped silently): wake anyway.
      wakeLocal(name);
      await wakeOthers(name);
    },
    async healthy() {
      try {
        return (await boss.getQueue('noop')) !== null;
      } catch {
        return false;
      }
    },
    async stop() {
      await listener?.stop();
      await boss.stop({ graceful: true, timeout: 5000 });
    },
  };
}

const WAKE_CHANNEL = 'bleedwright_jobs';
type Wake = { schema: string; queue: string; from: string };

/**
 * LISTENs on its own connection and wakes this process's workers of a queue another process sent to.
 * A lost connection (database restart) is opened again after a second; until then, and for anything
 * sent meanwhile, the workers' polling still finds every job (each reconnect wakes all of them once).
 */
function listenForWakes(opts: { databaseUrl: string; schema: string; instance: string; wake: (queue: string | null) => void; onError: (err: Error) => void }) {
  let current: pg.Client | null = null;
  let retry: NodeJS.Timeout | null = null;
  let stopped = false;
  const dropped = new WeakSet<pg.Client>();
  const drop = (client: pg.Client, err?: Error) => {
    if (dropped.has(client)) return;
    dropped.add(client);
    if (current === client) current = null;
    if (err && !stopped) opts.onError(err);
    client.end().catch(() => {});
    if (stopped || retry) return;
    retry = setTimeout(() => {
      retry = null;
      connecting = connect();
    }, 1000);
    retry.unref();
  };
  const connect = async () => {
    const client = new pg.Client({ connectionString: opts.databaseUrl });
    client.on('error', (err) => drop(client, err));
    client.on('end', () => drop(client));
    client.on('notification', (msg) => {
      let wake: Wake;
      try {
        wake = JSON.parse(msg.payload ?? '');
      } catch {
        return;
      }
      if (wake.schema === opts.schema && wake.from !== opts.instance) opts.wake(wake.queue);
    });
    try {
      await client.connect();
      await client.query(`LISTEN ${WAKE_CHANNEL}`);
    } catch (err) {
      drop(client, err as Error);
      return;
    }
    if (stopped || dropped.has(client)) return drop(client);
    current = client;
    opts.wake(null);
  };
  let connecting = connect();
  return {
    async stop() {
      stopped = true;
      if (retry) clearTimeout(retry);
      await connecting;
      const client = current;
      current = null;
      if (client) {
        dropped.add(client);
        await client.end().catch(() => {});
      }
    },
  };
}
