// Which storage backend a process uses, from BLEEDWRIGHT_* variables: local disk unless a bucket is
// named. The app (`npm start`) and every `npm run worker` must be given the same settings.
import path from 'node:path';
import { localStorage, type Storage } from './storage.ts';
import { s3Storage } from './storage-s3.ts';

export function storageFromEnv(env: NodeJS.ProcessEnv, defaultRoot: string): Storage {
  const bucket = env.BLEEDWRIGHT_S3_BUCKET;
  if (!bucket) return localStorage(path.resolve(env.BLEEDWRIGHT_STORAGE ?? defaultRoot));
  const accessKeyId = env.BLEEDWRIGHT_S3_ACCESS_KEY_ID;
  const secretAccessKey = env.BLEEDWRIGHT_S3_SECRET_ACCESS_KEY;
  const presign = Number(env.BLEEDWRIGHT_S3_PRESIGN_SECONDS ?? 300);
  return s3Storage({
    bucket,
    endpoint: env.BLEEDWRIGHT_S3_ENDPOINT || undefined,
    region: env.BLEEDWRIGHT_S3_REGION || undefined,
    forcePathStyle: env.BLEEDWRIGHT_S3_PATH_STYLE ? env.BLEEDWRIGHT_S3_PATH_STYLE === '1' : undefined,
    credentials: accessKeyId && secretAccessKey ? { accessKeyId, secretAccessKey } : undefined,
    presignSeconds: Number.isFinite(presign) && presign > 0 ? presign : 300,
  });
}
