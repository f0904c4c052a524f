// `npm start`: Debian PostgreSQL -> embedded cluster under ./.data -> client build (when stale) ->
// the app process (API + client + workers + demo mail catcher), which migrates and seeds at start.
import { spawnSync } from 'node:child_process';
import { existsSync, readdirSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { ensureSystemPackages, START_PACKAGES } from './system-deps.mjs';
import { ensureDatabase } from './db.mjs';

/** Newest modification time of any file under these paths. */
function newest(paths) {
  let max = 0;
  for (const p of paths) {
    if (!existsSync(p)) continue;
    const st = statSync(p);
    if (st.isDirectory()) {
      for (const e of readdirSync(p)) max = Math.max(max, newest([join(p, e)]));
    } else max = Math.max(max, st.mtimeMs);
  }
  return max;
}

export function clientIsStale() {
  if (!existsSync('dist/index.html')) return true;
  return newest(['src', 'shared', 'index.html', 'vite.config.ts']) > statSync('dist/index.html').mtimeMs;
}

export function buildClient() {
  console.log('Building the client (vite build)...');
  const r = spawnSync('npx', ['vite', 'build', '--logLevel', 'warn'], { stdio: 'inherit' });
  if (r.status !== 0) throw new Error('vite build failed');
}

if (import.meta.url === `file://${process.argv[1]}`) {
  if (!process.env.DATABASE_URL) ensureSystemPackages(START_PACKAGES);
  process.env.DATABASE_URL = await ensureDatabase({
    dataDir: '.data',
    port: Number(process.env.BLEEDWRIGHT_PG_PORT ?? 54329),
    database: 'bleedwright',
  });
  if (clientIsStale()) buildClient();
  const { register } = await import('tsx/esm/api');
  register();
  await import('../server/main.ts');
}
