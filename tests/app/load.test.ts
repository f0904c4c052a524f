// The bounded load test of issue 6 at full size: 20 zips of 20 MB posted at once, then 5 runs started
// at once, against the server running as its own process (API and workers, as `npm start` runs it) on
// loopback. Every upload and run must complete, and the server's peak resident memory (the kernel's
// VmHWM) is measured, printed and held under a stated bound. `npm run load` runs the same code alone.
import { describe, expect, it } from 'vitest';
import { FULL_LOAD, PEAK_RSS_BOUND_MB } from '../load/config.ts';
import { runLoad } from '../load/load.ts';

describe('bounded load on loopback', () => {
  const { uploads, zipMegabytes, runs, cardsPerZip } = FULL_LOAD;

  it(`${uploads} concurrent ${zipMegabytes} MB uploads and ${runs} parallel runs all complete; server peak memory stays under ${PEAK_RSS_BOUND_MB} MB`, { timeout: 900_000 }, async () => {
    const started = performance.now();
    const result = await runLoad({ databaseUrl: process.env.DATABASE_URL!, ...FULL_LOAD, timeoutMs: 600_000 });
    expect(result.uploads.statuses).toEqual(Array(uploads).fill(201));
    expect(result.uploads.artSets).toBe(uploads); // none deduplicated: 20 art sets really stored
    expect(result.uploads.zipBytes).toBeGreaterThanOrEqual(zipMegabytes * 1024 * 1024);
    expect(result.runs.states).toEqual(Array(runs).fill('done'));
    expect(result.runs.cards).toEqual(Array(runs).fill(cardsPerZip));
    // Measured, not assumed: the kernel's high-water mark agrees with the sampled sizes (to its per-thread
    // counting slack) and lies above the idle size.
    expect(result.server.hwmMb).toBeGreaterThanOrEqual(result.server.sampledMaxRssMb - 16);
    expect(result.server.hwmMb).toBeGreaterThan(result.server.baselineRssMb);
    expect(result.server.peakRssMb).toBeLessThan(PEAK_RSS_BOUND_MB);
    console.log(
      `load: ${uploads} x ${(result.uploads.zipBytes / 1024 / 1024).toFixed(1)} MiB uploads in ${result.uploads.seconds.toFixed(1)} s, ` +
        `${runs} runs in ${result.runs.seconds.toFixed(1)} s, server idle ${result.server.baselineRssMb} MB, peak RSS ${result.server.peakRssMb} MB (VmHWM ${result.server.hwmMb} MB) ` +
        `(bound ${PEAK_RSS_BOUND_MB} MB); test ${((performance.now() - started) / 1000).toFixed(0)} s`,
    );
  });
});
