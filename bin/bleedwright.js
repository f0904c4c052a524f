#!/usr/bin/env -S MALLOC_MMAP_THRESHOLD_=67108864 MALLOC_TRIM_THRESHOLD_=1073741824 node
// Entry point of the `bleedwright` CLI: runs the prebuilt bundle (scripts/build-cli.mjs), rebuilt when
// a source is newer; loads the TypeScript sources through tsx when it cannot be built. The shebang sets
// glibc's malloc to reuse card-sized blocks (scripts/malloc-env.mjs says why).
import { availableParallelism } from 'node:os';
import { pathToFileURL } from 'node:url';

// Every card in flight (CARDS_IN_FLIGHT in jobs/engine/run.ts: BLEEDWRIGHT_CARDS_IN_FLIGHT, else cores,
// counting at most 4, + 1) holds a libuv pool thread while libvips works; two more keep file reads and
// writes from queueing behind them. Set before anything uses the pool, which reads it once.
const inFlight = Number(process.env.BLEEDWRIGHT_CARDS_IN_FLIGHT) || Math.min(4, availableParallelism()) + 1;
process.env.UV_THREADPOOL_SIZE ??= String(Math.max(4, inFlight + 2));

const { cliEntry } = await import('../scripts/build-cli.mjs');
const entry = await cliEntry();
if (entry) {
  // Stack traces are printed only with BLEEDWRIGHT_DEBUG; then they name the .ts sources. Always on,
  // the maps would be parsed on every start (~0.1 s for the bundled packages' maps).
  if (process.env.BLEEDWRIGHT_DEBUG) process.setSourceMapsEnabled(true);
  await import(pathToFileURL(entry).href);
} else {
  const { register } = await import('tsx/esm/api');
  register();
  await import('../cli/main.ts');
}
