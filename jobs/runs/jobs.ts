// The three run queues and their handlers (registered in jobs/registry.ts). Payloads carry ids only.
import type PgBoss from 'pg-boss';
import type { JobDefinition } from '../registry.ts';
import { assembleRun } from './assemble.ts';
import { planRun } from './plan.ts';
import { renderRunCard } from './render.ts';
import { runsConfigFromEnv, runsRuntime } from './runtime.ts';

export const RUN_QUEUE_NAMES = ['run-plan', 'run-render', 'run-assemble'] as const;

// Expiry and worker counts come from the environment so tests can make a killed worker's job come
// back in seconds. Retries are set explicitly (pg-boss 10's effective default is 2).
const config = runsConfigFromEnv();
const polling = { pollingIntervalSeconds: Math.max(0.5, config.pollingSeconds) };

export const RUN_JOBS: JobDefinition[] = [
  {
    name: 'run-plan',
    handler: async (jobs: PgBoss.Job<object>[]) => {
      for (const job of jobs) await planRun(runsRuntime(), (job.data as { runId: string }).runId);
    },
    options: { name: 'run-plan', policy: 'short', retryLimit: 3, retryDelay: 2, expireInSeconds: config.renderExpireSeconds },
    work: { ...polling, workers: 1 },
  },
  {
    name: 'run-render',
    handler: async (jobs: PgBoss.Job<object>[]) => {
      for (const job of jobs as PgBoss.JobWithMetadata<{ cardId: string }>[]) {
        await renderRunCard(runsRuntime(), job.data.cardId, job.retryCount >= job.retryLimit);
      }
    },
    options: { name: 'run-render', policy: 'short', retryLimit: 3, retryDelay: 1, expireInSeconds: config.renderExpireSeconds },
    work: { ...polling, includeMetadata: true, workers: config.workerConcurrency },
  },
  {
    name: 'run-assemble',
    handler: async (jobs: PgBoss.Job<object>[]) => {
      for (const job of jobs) await assembleRun(runsRuntime(), (job.data as { runId: string }).runId);
    },
    options: { name: 'run-assemble', policy: 'short', retryLimit: 3, retryDelay: 2, expireInSeconds: config.assembleExpireSeconds },
    work: { ...polling, workers: 1 },
  },
];
