import { createRequire } from 'node:module';
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
   * Sends a job and wakes this process's workers of that queue at once; null when pg-boss drops it as a
   * duplicate (singletonKey). Workers in other processes still find it at their next poll.
   */
  offer(name: string, data: object, options?: PgBoss.SendOptions): Promise<string | null>;
  /**
   * offer() for many jobs of one queue in one statement (pg-boss insert: the same singletonKey, retry and
   * expiry options as send); returns how many were accepted (duplicates of a singletonKey are dropped).
   */
  offerMany(name: string, jobs: ReadonlyArray<{ data: object; options?: ManyOptions }>): Promise<number>;
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
  const boss = new PgBoss({ max: 4, schema: 'pgboss', ...opts.bossOptions, connectionString: opts.databaseUrl });
  boss.on('error', opts.onError ?? ((err) => console.error('pg-boss error', err)));
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
      if (id) for (const workerId of local.get(name) ?? []) boss.notifyWorker(workerId);
      return id;
    },
    async offerMany(name, jobs) {
      if (jobs.length === 0) return 0;
      // Typed as void, insert() returns the ids of the jobs it inserted (null when none).
      const ids = (await boss.insert(
        jobs.map(({ data, options = {} }) => ({
          name,
          data,
          ...options,
          // insert() reads whole seconds (send() also takes fractions); never less than one.
          ...(options.expireInSeconds === undefined ? {} : { expireInSeconds: Math.max(1, Math.ceil(options.expireInSeconds)) }),
        })),
      )) as unknown as string[] | null;
      if (ids) for (const workerId of local.get(name) ?? []) boss.notifyWorker(workerId);
      return ids?.length ?? 0;
    },
    async healthy() {
      try {
        return (await boss.getQueue('noop')) !== null;
      } catch {
        return false;
      }
    },
    stop: () => boss.stop({ graceful: true, timeout: 5000 }),
  };
}
