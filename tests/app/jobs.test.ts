import { describe, expect, it } from 'vitest';
import { startQueue } from '../../jobs/boss.ts';
import { JOBS, QUEUE_NAMES, checkRegistry, type JobDefinition } from '../../jobs/registry.ts';

const noop = JOBS.find((j) => j.name === 'noop')!;

describe('job registry', () => {
  it('accepts the app’s own registry', () => {
    expect(() => checkRegistry(QUEUE_NAMES, JOBS)).not.toThrow();
  });

  it('fails at start-up when a queue name has no handler, or a handler no queue name', async () => {
    expect(() => checkRegistry(['noop', 'render-card'], [noop])).toThrow(/queue "render-card" has no handler/);
    const stray: JobDefinition = { ...noop, name: 'stray', options: { ...noop.options, name: 'stray' } };
    expect(() => checkRegistry(['noop'], [noop, stray])).toThrow(/handler "stray" has no queue name/);
    expect(() => checkRegistry(['noop'], [noop, noop])).toThrow(/registered twice/);
    await expect(startQueue({ databaseUrl: process.env.DATABASE_URL!, names: ['noop', 'render-card'], jobs: [noop] })).rejects.toThrow(/has no handler/);
  });

  it('runs the noop health job through pg-boss on the app database', async () => {
    const queue = await startQueue({ databaseUrl: process.env.DATABASE_URL! });
    try {
      expect(await queue.healthy()).toBe(true);
      const id = await queue.send('noop', {});
      expect(id).toMatch(/^[0-9a-f-]{36}$/);
      let state = '';
      for (let i = 0; i < 100 && state !== 'completed'; i++) {
        await new Promise((r) => setTimeout(r, 100));
        state = (await queue.boss.getJobById('noop', id))?.state ?? '';
      }
      expect(state).toBe('completed');
      expect((await queue.boss.getQueue('noop'))?.retryLimit).toBe(1);
    } finally {
      await queue.stop();
    }
  });
});
