import type PgBoss from 'pg-boss';
import { RUN_JOBS, RUN_QUEUE_NAMES } from './runs/jobs.ts';

export interface JobDefinition<T extends object = object> {
  name: string;
  handler: (jobs: PgBoss.Job<T>[]) => Promise<unknown>;
  /** Queue options; retryLimit is always set explicitly (pg-boss 10's effective default is 2). */
  options: PgBoss.Queue & { retryLimit: number };
  /** How this process works the queue: pg-boss work options plus how many workers (default 1). */
  work?: PgBoss.WorkOptions & { workers?: number };
}

/** Every queue the app uses. Payloads carry ids only. */
export const QUEUE_NAMES = ['noop', ...RUN_QUEUE_NAMES] as const;
export type QueueName = (typeof QUEUE_NAMES)[number];

// A health job: proves a worker picks jobs up. Later issues add their handlers to this one list.
export const JOBS: JobDefinition[] = [
  {
    name: 'noop',
    handler: async () => ({ ok: true }),
    options: { name: 'noop', retryLimit: 1, expireInSeconds: 60 },
  },
  // Runs (issue 4): plan -> one render per card -> assemble. Handlers read the runtime installed by
  // the process (jobs/runs/runtime.ts).
  ...RUN_JOBS,
];

/** Fails fast when a queue name has no handler, a handler has no queue name, or a name repeats. */
export function checkRegistry(names: readonly string[], jobs: JobDefinition[]): void {
  const seen = new Set<string>();
  for (const job of jobs) {
    if (seen.has(job.name)) throw new Error(`Job registry: "${job.name}" is registered twice`);
    seen.add(job.name);
    if (!names.includes(job.name)) throw new Error(`Job registry: handler "${job.name}" has no queue name in QUEUE_NAMES`);
    if (typeof job.handler !== 'function') throw new Error(`Job registry: "${job.name}" has no handler function`);
    if (typeof job.options.retryLimit !== 'number') throw new Error(`Job registry: "${job.name}" must set retryLimit`);
  }
  for (const name of names) {
    if (!seen.has(name)) throw new Error(`Job registry: queue "${name}" has no handler`);
  }
}
