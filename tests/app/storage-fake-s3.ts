// A local fake S3 (s3rver from npm) on 127.0.0.1 for the storage suite and the multi-worker test. Its
// files live in a temp folder removed on close. s3rver checks SigV4 signatures with the key pair below.
import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import path from 'node:path';
import S3rver from 's3rver';

export interface FakeS3 {
  endpoint: string;
  bucket: string;
  credentials: { accessKeyId: string; secretAccessKey: string };
  /** The BLEEDWRIGHT_S3_* variables that point a process at this store. */
  env: Record<string, string>;
  close(): Promise<void>;
}

export async function startFakeS3(bucket = 'bleedwright-test'): Promise<FakeS3> {
  const directory = await mkdtemp(path.join(tmpdir(), 'bw-s3-'));
  const server = new S3rver({ address: '127.0.0.1', port: 0, silent: true, directory, configureBuckets: [{ name: bucket }] });
  const { port } = await server.run();
  const endpoint = `http://127.0.0.1:${port}`;
  const credentials = { accessKeyId: 'S3RVER', secretAccessKey: 'S3RVER' };
  return {
    endpoint,
    bucket,
    credentials,
    env: {
      BLEEDWRIGHT_S3_BUCKET: bucket,
      BLEEDWRIGHT_S3_ENDPOINT: endpoint,
      BLEEDWRIGHT_S3_REGION: 'us-east-1',
      BLEEDWRIGHT_S3_ACCESS_KEY_ID: credentials.accessKeyId,
      BLEEDWRIGHT_S3_SECRET_ACCESS_KEY: credentials.secretAccessKey,
    },
    async close() {
      await server.close();
      await rm(directory, { recursive: true, force: true });
    },
  };
}
