import { describe, expect, it } from 'vitest';
import { limiter, mapLimited } from './map-limited.ts';

/** A task that records how many run at once and finishes when told. */
function gate() {
  let running = 0;
  let most = 0;
  const started: number[] = [];
  const release: Array<() => void> = [];
  const task = (n: number, fail = false) => async () => {
    running++;
    most = Math.max(most, running);
    started.push(n);
    await new Promise<void>((resolve) => release.push(resolve));
    running--;
    if (fail) throw new Error(`task ${n} failed`);
    return n * 10;
  };
  const tick = () => new Promise((resolve) => setImmediate(resolve));
  return { task, release, started, most: () => most, tick };
}

describe('limiter', () => {
  it('runs at most `limit` tasks at once, in the order given, and a failed task frees its slot', async () => {
    const g = gate();
    const run = limiter(2);
    const results = [run(g.task(1)), run(g.task(2, true)), run(g.task(3)), run(g.task(4))].map((p) => p.then((v) => v, (e: Error) => e.message));
    await g.tick();
    expect(g.started).toEqual([1, 2]);
    g.release[1]!(); // task 2 fails: task 3 takes its slot
    await g.tick();
    expect(g.started).toEqual([1, 2, 3]);
    g.release[0]!();
    await g.tick();
    expect(g.started).toEqual([1, 2, 3, 4]);
    g.release[2]!();
    g.release[3]!();
    expect(await Promise.all(results)).toEqual([10, 'task 2 failed', 30, 40]);
    expect(g.most()).toBe(2);
  });
});

describe('mapLimited', () => {
  it('keeps the results in the order of the items whatever order they finish in', async () => {
    const out = await mapLimited([30, 10, 20], 2, async (ms, i) => {
      await new Promise((resolve) => setTimeout(resolve, ms));
      return `${i}:${ms}`;
    });
    expect(out).toEqual(['0:30', '1:10', '2:20']);
  });
});
