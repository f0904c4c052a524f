#!/usr/bin/env node
// Entry point of the `bleedwright` CLI: loads the TypeScript sources through tsx.
import { availableParallelism } from 'node:os';

// Every card in flight (CARDS_IN_FLIGHT: cores, counting at most 4, + 1) holds a libuv pool thread while
// libvips works; two more keep file reads and writes from queueing behind them. Set before anything
// uses the pool, which reads it once.
process.env.UV_THREADPOOL_SIZE ??= String(Math.max(4, Math.min(4, availableParallelism()) + 3));
const { register } = await import('tsx/esm/api');
register();
await import('../cli/main.ts');
