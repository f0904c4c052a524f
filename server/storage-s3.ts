// The S3-compatible backend of `Storage` (AWS SDK v3). Uploads stream through lib-storage's `Upload`
// (multipart above one part, so a large zip never sits in memory), downloads to the browser go through
// short-lived presigned URLs, and workers copy what sharp and the PDF writer need into their own work
// folder: nothing relies on another machine's disk.
import { randomBytes } from 'node:crypto';
import { createReadStream, createWriteStream } from 'node:fs';
import { mkdir, rename, rm, stat } from 'node:fs/promises';
import path from 'node:path';
import { Readable } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import {
  DeleteObjectsCommand,
  GetObjectCommand,
  HeadObjectCommand,
  ListObjectsV2Command,
  S3Client,
  type S3ClientConfig,
} from '@aws-sdk/client-s3';
import { Upload } from '@aws-sdk/lib-storage';
import { getSignedUrl } from '@aws-sdk/s3-request-presigner';
import { checkKey, type Storage } from './storage.ts';

export interface S3StorageOptions {
  bucket: string;
  /** Endpoint of a non-AWS store (MinIO, a local fake); AWS picks its own from the region. */
  endpoint?: string;
  region?: string;
  /** Path-style URLs (`endpoint/bucket/key`), which most non-AWS stores need. */
  forcePathStyle?: boolean;
  /** Explicit keys; without them the SDK's default chain (environment, profile, instance role) applies. */
  credentials?: { accessKeyId: string; secretAccessKey: string };
  /** Multipart part size in bytes (S3's minimum is 5 MiB). */
  partSize?: number;
  /** Lifetime of presigned download URLs, seconds. */
  presignSeconds?: number;
}

const PART_SIZE = 8 * 1024 * 1024;

function isNotFound(err: unknown): boolean {
  const e = err as { name?: string; $metadata?: { httpStatusCode?: number } };
  return e?.name === 'NotFound' || e?.name === 'NoSuchKey' || e?.$metadata?.httpStatusCode === 404;
}

/** A missing key reads like a missing local file, so callers handle both backends the same way. */
function missing(key: string): NodeJS.ErrnoException {
  return Object.assign(new Error(`Storage key "${key}" does not exist`), { code: 'ENOENT' });
}

export function s3Storage(opts: S3StorageOptions): Storage & { client: S3Client } {
  const config: S3ClientConfig = {
    region: opts.region ?? 'us-east-1',
    forcePathStyle: opts.forcePathStyle ?? Boolean(opts.endpoint),
  };
  if (opts.endpoint) config.endpoint = opts.endpoint;
  if (opts.credentials) config.credentials = opts.credentials;
  const client = new S3Client(config);
  const Bucket = opts.bucket;
  const partSize = Math.max(opts.partSize ?? PART_SIZE, 5 * 1024 * 1024);

  async function upload(key: string, body: Buffer | Readable) {
    const up = new Upload({ client, params: { Bucket, Key: checkKey(key), Body: body }, partSize, queueSize: 4, leavePartsOnError: false });
    await up.done();
  }

  async function head(key: string) {
    try {
      return await client.send(new HeadObjectCommand({ Bucket, Key: checkKey(key) }));
    } catch (err) {
      if (isNotFound(err)) return null;
      throw err;
    }
  }

  async function get(key: string, range?: { start: number; end: number }): Promise<Readable> {
    try {
      const out = await client.send(new GetObjectCommand({ Bucket, Key: checkKey(key), Range: range ? `bytes=${range.start}-${range.end}` : undefined }));
      return out.Body as Readable;
    } catch (err) {
      if (isNotFound(err)) throw missing(key);
      throw err;
    }
  }

  return {
    kind: 's3',
    root: `s3://${Bucket}`,
    client,
    put: upload,
    async putFile(key, file) {
      await upload(key, createReadStream(file));
      await rm(file, { force: true });
    },
    get,
    async fetchFile(key, workDir) {
      const target = path.join(path.resolve(workDir), 'cache', checkKey(key));
      try {
        await stat(target);
        return target;
      } catch {
        // not cached yet
      }
      await mkdir(path.dirname(target), { recursive: true });
      const tmp = `${target}.${process.pid}.${randomBytes(6).toString('hex')}.tmp`;
      try {
        await pipeline(await get(key), createWriteStream(tmp));
        await rename(tmp, target);
      } catch (err) {
        await rm(tmp, { force: true });
        throw err;
      }
      return target;
    },
    async downloadUrl(key, o = {}) {
      const command = new GetObjectCommand({
        Bucket,
        Key: checkKey(key),
        ResponseContentType: o.contentType,
        ResponseContentDisposition: o.filename ? contentDisposition(o.filename) : undefined,
      });
      return getSignedUrl(client, command, { expiresIn: o.expiresSeconds ?? opts.presignSeconds ?? 300 });
    },
    path(key) {
      throw new Error(`Storage key "${key}" is in object storage and has no local path; use fetchFile()`);
    },
    exists: async (key) => (await head(key)) !== null,
    async size(key) {
      const h = await head(key);
      if (!h) throw missing(key);
      return Number(h.ContentLength ?? 0);
    },
    async remove(key) {
      checkKey(key);
      const keys: string[] = [key];
      let token: string | undefined;
      do {
        const page = await client.send(new ListObjectsV2Command({ Bucket, Prefix: `${key}/`, ContinuationToken: token }));
        for (const o of page.Contents ?? []) if (o.Key) keys.push(o.Key);
        token = page.IsTruncated ? page.NextContinuationToken : undefined;
      } while (token);
      for (let i = 0; i < keys.length; i += 1000) {
        await client.send(new DeleteObjectsCommand({ Bucket, Delete: { Objects: keys.slice(i, i + 1000).map((Key) => ({ Key })), Quiet: true } }));
      }
    },
  };
}

/** RFC 6266 attachment header; names beyond plain ASCII add the UTF-8 form (RFC 5987) beside a fallback. */
export function contentDisposition(filename: string): string {
  const ascii = filename.replace(/[^\x20-\x7e]|["\\]/g, '_');
  if (ascii === filename) return `attachment; filename="${filename}"`;
  return `attachment; filename="${ascii}"; filename*=UTF-8''${encodeURIComponent(filename)}`;
}
