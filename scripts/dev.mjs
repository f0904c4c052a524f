// `npm run dev`: the API (tsx watch, port 4400) and Vite's dev server (port 5173) with a proxy for
// /api, both against the same embedded PostgreSQL as `npm start`.
import { spawn } from 'node:child_process';
import { ensureSystemPackages, START_PACKAGES } from './system-deps.mjs';
import { ensureDatabase } from './db.mjs';

if (!process.env.DATABASE_URL) ensureSystemPackages(START_PACKAGES);
const env = {
  ...process.env,
  DATABASE_URL: await ensureDatabase({ dataDir: '.data', port: Number(process.env.BLEEDWRIGHT_PG_PORT ?? 54329), database: 'bleedwright' }),
  PORT: process.env.PORT ?? '4400',
  BLEEDWRIGHT_PUBLIC_URL: process.env.BLEEDWRIGHT_PUBLIC_URL ?? 'http://127.0.0.1:5173',
};
const children = [
  spawn('npx', ['tsx', 'watch', 'server/main.ts'], { stdio: 'inherit', env }),
  spawn('npx', ['vite', '--host', '127.0.0.1', '--port', '5173'], { stdio: 'inherit', env }),
];
const stop = () => {
  for (const child of children) child.kill('SIGTERM');
  process.exit(0);
};
process.once('SIGINT', stop);
process.once('SIGTERM', stop);
for (const child of children) child.on('exit', (code) => code && stop());
