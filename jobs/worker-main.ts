// `npm run worker`: runs the job handlers only, against the same PostgreSQL (DATABASE_URL) and storage
// as the app. Start as many as you like on other machines.
import { startQueue } from './boss.ts';

const databaseUrl = process.env.DATABASE_URL;
if (!databaseUrl) {
  console.error('DATABASE_URL is not set: point it at the database the app uses.');
  process.exit(2);
}
const queue = await startQueue({ databaseUrl });
console.log('Bleedwright worker ready');
const stop = async () => {
  await queue.stop();
  process.exit(0);
};
process.once('SIGINT', stop);
process.once('SIGTERM', stop);
