// The size of the bounded load test of issue 6, shared by `npm test` (tests/app/load.test.ts),
// `npm run load` (tests/load/run.ts) and the README check (tests/engine/hostile-readme-limits.test.ts).
export const FULL_LOAD = {
  /** Zips posted at once. */
  uploads: 20,
  /** Size of each zip, in MiB (at least). */
  zipMegabytes: 20,
  /** Runs started at once, each on one of the uploaded art sets. */
  runs: 5,
  /** Card images per zip: each run renders this many cards. */
  cardsPerZip: 6,
  dpi: 300,
} as const;

/**
 * The bound the server process's peak resident memory (VmHWM) must stay under during the full load:
 * uploads stream to disk and zip entries are read one at a time, so it stays far below the size of
 * what is uploaded at once (20 x 20 MB). Measured peaks are around 400 MB.
 */
export const PEAK_RSS_BOUND_MB = 768;
