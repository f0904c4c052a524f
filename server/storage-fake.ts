// A local fake S3 for trying object storage with `npm start` alone: BLEEDWRIGHT_S3_FAKE=1 starts s3rver
// (a dev dependency) on 127.0.0.1 with its files under .data/s3 and points the storage settings at it.
// Never for real use: s3rver does not enforce signatures' expiry and keeps everything on one disk.
import { mkdirSync } from 'node:fs';
import path from 'node:path';

export async function startFakeS3ForDemo(env: NodeJS.ProcessEnv, dataDir: string): Promise<{ endpoint: string; close(): Promise<void> }> {
  const { default: S3rver } = await import('s3rver');
  const bucket = env.BLEEDWRIGHT_S3_BUCKET || 'bleedwright';
  const port = Number(env.BLEEDWRIGHT_S3_FAKE_PORT ?? 4569);
  const directory = path.join(dataDir, 's3');
  mkdirSync(directory, { recursive: true });
  const server = new S3rver({ address: '127.0.0.1', port, silent: true, directory, configureBuckets: [{ name: bucket }] });
  await server.run();
  const endpoint = `http://127.0.0.1:${port}`;
  // s3rver's fixed key pair; workers given the same variables reach the same store.
  Object.assign(env, {
    BLEEDWRIGHT_S3_BUCKET: bucket,
    BLEEDWRIGHT_S3_ENDPOINT: endpoint,
    BLEEDWRIGHT_S3_ACCESS_KEY_ID: 'S3RVER',
    BLEEDWRIGHT_S3_SECRET_ACCESS_KEY: 'S3RVER',
  });
  return { endpoint, close: () => server.close() };
}
