// `npm run load`: the bounded load test of issue 6 on its own (the same code and size as
// tests/app/load.test.ts in `npm test`): 20 concurrent uploads of 20 MB zips, then 5 runs in parallel,
// against the embedded setup on its own cluster under .data/load. Stops by itself and prints the
// figures, peak server memory included. Exit 1 when anything did not complete or memory passed the bound.
import { ensureDatabase, stopDatabase } from '../../scripts/db.mjs';
import { FULL_LOAD, PEAK_RSS_BOUND_MB } from './config.ts';
import { runLoad } from './load.ts';

const DATA_DIR = '.data/load';
const PORT = Number(process.env.BLEEDWRIGHT_LOAD_PG_PORT ?? 54373);

const databaseUrl = process.env.DATABASE_URL ?? (await ensureDatabase({ dataDir: DATA_DIR, port: PORT, database: 'bleedwright_load', log: () => {} }));
const started = performance.now();
let ok = false;
try {
  const r = await runLoad({ databaseUrl, ...FULL_LOAD, log: (l) => console.log(`- ${l}`), timeoutMs: 900_000 });
  const complete = r.uploads.statuses.every((s) => s === 201) && r.uploads.artSets === FULL_LOAD.uploads && r.runs.states.every((s) => s === 'done');
  const bounded = r.server.peakRssMb < PEAK_RSS_BOUND_MB;
  ok = complete && bounded;
  console.log(
    [
      `uploads: ${r.uploads.count} x ${(r.uploads.zipBytes / 1024 / 1024).toFixed(1)} MiB at once in ${r.uploads.seconds.toFixed(1)} s; statuses ${[...new Set(r.uploads.statuses)].join(', ')}; ${r.uploads.artSets} art sets`,
      `runs: ${r.runs.count} at once (${r.runs.cards.join(', ')} cards at ${FULL_LOAD.dpi} DPI) in ${r.runs.seconds.toFixed(1)} s; states ${[...new Set(r.runs.states)].join(', ')}`,
      `server process memory: idle ${r.server.baselineRssMb} MB, peak RSS ${r.server.peakRssMb} MB (VmHWM ${r.server.hwmMb} MB; bound ${PEAK_RSS_BOUND_MB} MB), sampled max ${r.server.sampledMaxRssMb} MB`,
      `total ${((performance.now() - started) / 1000).toFixed(0)} s: ${complete ? 'all complete' : 'NOT all complete'}${bounded ? '' : ', OVER the memory bound'}`,
    ].join('\n'),
  );
} finally {
  if (!process.env.DATABASE_URL) stopDatabase({ dataDir: DATA_DIR });
}
process.exit(ok ? 0 : 1);
