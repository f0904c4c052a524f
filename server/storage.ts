// Files of every workspace live under one storage root, always behind keys that start with
// `ws/<workspaceId>/`. Writes go to a temp name and are renamed into place, so a reader never sees half a
// file and a retried write of the same bytes changes nothing. Swappable in tests (an interface, not fs).
import { createHash, randomBytes } from 'node:crypto';
import { createReadStream, createWriteStream } from 'node:fs';
import { mkdir, rename, rm, stat, copyFile } from 'node:fs/promises';
import path from 'node:path';
import { Readable } from 'node:stream';
import { pipeline } from 'node:stream/promises';

export interface DownloadOptions {
  /** Offered file name (Content-Disposition: attachment); none shows the file inline. */
  filename?: string;
  contentType?: string;
  /** Lifetime of a presigned URL; 300 s unless given. */
  expiresSeconds?: number;
}

export interface Storage {
  readonly kind: 'local' | 's3';
  /** Local disk: the storage folder. S3: `s3://<bucket>`. */
  readonly root: string;
  /** Writes bytes or a stream under `key` (local: temp file, then rename; S3: streamed, multipart when large). */
  put(key: string, data: Buffer | Readable): Promise<void>;
  /** Moves a local file into `key`; the local file is gone afterwards. */
  putFile(key: string, file: string): Promise<void>;
  /** The bytes of `key`, or with `range` only bytes start..end (both included). */
  get(key: string, range?: { start: number; end: number }): Promise<Readable>;
  /**
   * A local file holding `key`'s bytes, for sharp and the PDF writer, which read paths. Local disk gives
   * the stored file itself; S3 downloads it once into `<workDir>/cache/` (keys hold content hashes or are
   * rewritten with the same bytes, so a cached copy stays right).
   */
  fetchFile(key: string, workDir: string): Promise<string>;
  /** A short-lived URL that serves `key` straight from the store, or null when the app must stream it. */
  downloadUrl(key: string, opts?: DownloadOptions): Promise<string | null>;
  /** Local disk only (tests and local tools): where `key` lives. The S3 backend throws. */
  path(key: string): string;
  exists(key: string): Promise<boolean>;
  size(key: string): Promise<number>;
  /** Removes `key` and everything stored under `key/`. */
  remove(key: string): Promise<void>;
}

const KEY = /^ws\/[0-9a-f-]{36}\/[A-Za-z0-9._\-/]+$/;

/** Refuses keys outside the workspace layout (no `..`, no absolute paths, no empty parts). */
export function checkKey(key: string): string {
  if (!KEY.test(key) || key.split('/').some((p) => p === '' || p === '.' || p === '..')) {
    throw new Error(`Storage key "${key}" is not a workspace key`);
  }
  return key;
}

export const storageKeys = {
  blob: (workspaceId: string, sha256: string) => `ws/${workspaceId}/blobs/${sha256}`,
  render: (workspaceId: string, recipeVersionId: string, cacheName: string) => `ws/${workspaceId}/renders/${recipeVersionId}/${cacheName}.png`,
  runFile: (workspaceId: string, runId: string, name: string) => `ws/${workspaceId}/runs/${runId}/${name}`,
  runDir: (workspaceId: string, runId: string) => `ws/${workspaceId}/runs/${runId}`,
};

/**
 * The render cache's file name: the source bytes' hash, a short hash of the path (turn rules match
 * names) and the engine tag (renders of another engine version are other files).
 */
export function renderCacheName(sourceSha256: string, sourcePath: string, engine: string): string {
  return `${sourceSha256}-${createHash('sha256').update(sourcePath).digest('hex').slice(0, 16)}-${engine}`;
}

export function localStorage(root: string): Storage {
  const abs = path.resolve(root);
  const full = (key: string) => path.join(abs, checkKey(key));
  const temp = (target: string) => `${target}.${process.pid}.${randomBytes(6).toString('hex')}.tmp`;
  return {
    kind: 'local',
    root: abs,
    async put(key, data) {
      const target = full(key);
      await mkdir(path.dirname(target), { recursive: true });
      const tmp = temp(target);
      try {
        await pipeline(Buffer.isBuffer(data) ? Readable.from([data]) : data, createWriteStream(tmp));
        await rename(tmp, target);
      } catch (err) {
        await rm(tmp, { force: true });
        throw err;
      }
    },
    async putFile(key, file) {
      const target = full(key);
      await mkdir(path.dirname(target), { recursive: true });
      try {
        await rename(file, target);
      } catch (err) {
        if ((err as NodeJS.ErrnoException).code !== 'EXDEV') throw err;
        const tmp = temp(target);
        await copyFile(file, tmp);
        await rename(tmp, target);
        await rm(file, { force: true });
      }
    },
    async get(key, range) {
      const file = full(key);
      await stat(file); // a missing key fails here (ENOENT), not later in the stream
      return createReadStream(file, range);
    },
    async fetchFile(key) {
      const file = full(key);
      await stat(file);
      return file;
    },
    downloadUrl: async () => null,
    path: full,
    async exists(key) {
      try {
        await stat(full(key));
        return true;
      } catch {
        return false;
      }
    },
    async size(key) {
      return (await stat(full(key))).size;
    },
    async remove(key) {
      await rm(full(key), { recursive: true, force: true });
    },
  };
}
