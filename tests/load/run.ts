// `npm run load`: the full bounded load test of issue 6 on loopback: 20 concurrent uploads of 20 MB
// zips, then 5 runs in parallel, against the embedded setup (its own cluster under .data/load). Stops
// by itself and prints the figures, peak server memory included. Exit 1 when anything did not complete.
import { ensureDatabase, stopDatabase } from '../../scripts/db.mjs';
import { runLoad } from './load.ts';

const DATA_DIR = '.data/load';
const PORT = Number(process.env.BLEEDWRIGHT_LOAD_PG_PORT ?? 54373);

const databaseUrl = process.env.DATABASE_URL ?? (await ensureDatabase({ dataDir: DATA_DIR, port: PORT, database: 'bleedwright_load', log: () => {} }));
const started = performance.now();
let ok = false;
try {
  const r = await runLoad({ databaseUrl, uploads: 20, zipMegabytes: 20, runs: 5, cardsPerZip: 6, dpi: 300, log: (l) => console.log(`- ${l}`), timeoutMs: 900_000 });
  ok = r.uploads.statuses.every((s) => s === 201) && r.runs.states.every((s) => s === 'done');
  console.log(
    [
      `uploads: ${r.uploads.count} x ${(r.uploads.zipBytes / 1024 / 1024).toFixed(1)} MB at once in ${r.uploads.seconds.toFixed(1)} s; statuses ${[...new Set(r.uploads.statuses)].join(', ')}`,
      `runs: ${r.runs.count} at once (${r.runs.cards.join(', ')} cards at 300 DPI) in ${r.runs.seconds.toFixed(1)} s; states ${[...new Set(r.runs.states)].join(', ')}`,
      `server process memory: idle ${r.server.baselineRssMb} MB, peak RSS ${r.server.peakRssMb} MB (VmHWM), sampled max ${r.server.sampledMaxRssMb} MB`,
      `total ${((performance.now() - started) / 1000).toFixed(0)} s: ${ok ? 'all complete' : 'NOT all complete'}`,
    ].join('\n'),
  );
} finally {
  if (!process.env.DATABASE_URL) stopDatabase({ dataDir: DATA_DIR });
}
process.exit(ok ? 0 : 1);
