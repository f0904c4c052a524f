// The load test in small (issue 6): 6 uploads of 4 MB zips at once and 2 runs at once against the
// server running as its own process. `npm run load` runs the full size (20 x 20 MB, 5 runs) and prints
// the figures the README records.
import { describe, expect, it } from 'vitest';
import { runLoad } from '../load/load.ts';

describe('bounded load on loopback', () => {
  it('6 concurrent 4 MB uploads and 2 parallel runs all complete; peak server memory is measured', { timeout: 240_000 }, async () => {
    const result = await runLoad({ databaseUrl: process.env.DATABASE_URL!, uploads: 6, zipMegabytes: 4, runs: 2, cardsPerZip: 3, dpi: 100 });
    expect(result.uploads.statuses).toEqual(Array(6).fill(201));
    expect(result.uploads.zipBytes).toBeGreaterThan(3.5 * 1024 * 1024);
    expect(result.runs.states).toEqual(['done', 'done']);
    expect(result.runs.cards).toEqual([3, 3]);
    // Measured, not assumed: the high-water mark is at least what was sampled, and above the idle size.
    expect(result.server.peakRssMb).toBeGreaterThanOrEqual(result.server.sampledMaxRssMb);
    expect(result.server.peakRssMb).toBeGreaterThan(result.server.baselineRssMb);
    // A bound well under the machine: uploads are streamed to disk, not held in memory.
    expect(result.server.peakRssMb).toBeLessThan(1024);
    console.log(`load (small): uploads ${result.uploads.seconds.toFixed(1)} s, runs ${result.runs.seconds.toFixed(1)} s, server peak RSS ${result.server.peakRssMb} MB`);
  });
});
