// One storage suite, run against local disk and against a fake S3 (s3rver on 127.0.0.1): every backend
// must keep the same contract, since jobs and routes only see the `Storage` interface.
import { createHash, randomBytes, randomUUID } from 'node:crypto';
import { existsSync } from 'node:fs';
import { mkdtemp, readFile, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { Readable } from 'node:stream';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { localStorage, type Storage } from '../../server/storage.ts';
import { s3Storage } from '../../server/storage-s3.ts';
import { storageFromEnv } from '../../server/storage-config.ts';
import { startFakeS3, type FakeS3 } from './storage-fake-s3.ts';

const sha = (b: Buffer) => createHash('sha256').update(b).digest('hex');

async function readAll(stream: Readable): Promise<Buffer> {
  const parts: Buffer[] = [];
  for await (const chunk of stream) parts.push(Buffer.from(chunk));
  return Buffer.concat(parts);
}

/** A stream of `total` pseudo-random bytes in 1 MiB chunks, with the hash of what it yields. */
function randomStream(total: number): { stream: Readable; hash: () => string } {
  const h = createHash('sha256');
  let left = total;
  const stream = new Readable({
    read() {
      if (left <= 0) return this.push(null);
      const chunk = randomBytes(Math.min(left, 1024 * 1024));
      left -= chunk.length;
      h.update(chunk);
      this.push(chunk);
    },
  });
  return { stream, hash: () => h.digest('hex') };
}

let fake: FakeS3;
let scratch: string;

beforeAll(async () => {
  fake = await startFakeS3();
  scratch = await mkdtemp(path.join(tmpdir(), 'bw-storage-'));
});

afterAll(async () => {
  await fake?.close();
  await rm(scratch, { recursive: true, force: true });
});

const backends: Array<[string, () => Storage]> = [
  ['local disk', () => localStorage(path.join(scratch, 'local'))],
  // 5 MiB parts (S3's minimum) so the 11 MiB upload below is sent as three parts.
  ['S3 (s3rver)', () => s3Storage({ bucket: fake.bucket, endpoint: fake.endpoint, credentials: fake.credentials, partSize: 5 * 1024 * 1024 })],
];

describe.each(backends)('storage on %s', (_name, make) => {
  let storage: Storage;
  let ws: string;
  let workDir: string;
  beforeAll(async () => {
    storage = make();
    ws = randomUUID();
    workDir = await mkdtemp(path.join(scratch, 'work-'));
  });
  const key = (rest: string) => `ws/${ws}/${rest}`;

  it('stores bytes and gives them back, with size and existence', async () => {
    const bytes = randomBytes(4096);
    await storage.put(key('blobs/a'), bytes);
    expect(await storage.exists(key('blobs/a'))).toBe(true);
    expect(await storage.size(key('blobs/a'))).toBe(4096);
    expect(sha(await readAll(await storage.get(key('blobs/a'))))).toBe(sha(bytes));
    // Writing the same key again replaces it whole.
    const other = randomBytes(100);
    await storage.put(key('blobs/a'), other);
    expect(sha(await readAll(await storage.get(key('blobs/a'))))).toBe(sha(other));
  });

  it('streams a large upload (multipart on S3) without changing a byte', async () => {
    const src = randomStream(11 * 1024 * 1024 + 123);
    await storage.put(key('blobs/large'), src.stream);
    expect(await storage.size(key('blobs/large'))).toBe(11 * 1024 * 1024 + 123);
    const back = await readAll(await storage.get(key('blobs/large')));
    expect(sha(back)).toBe(src.hash());
  });

  it('moves a local file in (the local file is gone) and fetches a local copy for path-based tools', async () => {
    const file = path.join(workDir, 'render.part');
    const bytes = randomBytes(2048);
    await writeFile(file, bytes);
    await storage.putFile(key('renders/v1/card.png'), file);
    expect(existsSync(file)).toBe(false);
    const local = await storage.fetchFile(key('renders/v1/card.png'), workDir);
    expect(sha(await readFile(local))).toBe(sha(bytes));
    expect(await storage.fetchFile(key('renders/v1/card.png'), workDir)).toBe(local);
  });

  it('treats a missing key alike on both backends', async () => {
    expect(await storage.exists(key('blobs/none'))).toBe(false);
    await expect(storage.get(key('blobs/none'))).rejects.toMatchObject({ code: 'ENOENT' });
    await expect(storage.size(key('blobs/none'))).rejects.toMatchObject({ code: 'ENOENT' });
    await expect(storage.fetchFile(key('blobs/none'), workDir)).rejects.toMatchObject({ code: 'ENOENT' });
  });

  it('removes a key and everything under it, nothing else', async () => {
    await storage.put(key('runs/r1/a.pdf'), Buffer.from('a'));
    await storage.put(key('runs/r1/b.zip'), Buffer.from('b'));
    await storage.put(key('runs/r10/c.pdf'), Buffer.from('c'));
    await storage.remove(key('runs/r1'));
    expect(await storage.exists(key('runs/r1/a.pdf'))).toBe(false);
    expect(await storage.exists(key('runs/r1/b.zip'))).toBe(false);
    expect(await storage.exists(key('runs/r10/c.pdf'))).toBe(true);
  });

  it('refuses keys outside the workspace layout', async () => {
    await expect(storage.put(`ws/${ws}/../x`, Buffer.from('x'))).rejects.toThrow(/not a workspace key/);
    await expect(storage.put('/etc/passwd', Buffer.from('x'))).rejects.toThrow(/not a workspace key/);
  });
});

describe('downloads', () => {
  it('local disk has no download URL (the app streams the file)', async () => {
    expect(await localStorage(path.join(scratch, 'local')).downloadUrl(`ws/${randomUUID()}/blobs/x`)).toBeNull();
  });

  it('S3 gives a short-lived presigned URL that serves the bytes as an attachment', async () => {
    const storage = s3Storage({ bucket: fake.bucket, endpoint: fake.endpoint, credentials: fake.credentials });
    const k = `ws/${randomUUID()}/runs/r/deck.pdf`;
    const bytes = randomBytes(1000);
    await storage.put(k, bytes);
    const url = new URL((await storage.downloadUrl(k, { filename: 'deck.pdf', contentType: 'application/pdf' }))!);
    // AWS SigV4 query authentication: X-Amz-Expires is the lifetime in seconds.
    expect(url.searchParams.get('X-Amz-Expires')).toBe('300');
    const res = await fetch(url);
    expect(res.status).toBe(200);
    expect(res.headers.get('content-type')).toBe('application/pdf');
    expect(res.headers.get('content-disposition')).toContain('filename="deck.pdf"');
    expect(sha(Buffer.from(await res.arrayBuffer()))).toBe(sha(bytes));
    // (s3rver does not enforce SigV4 query signatures or their expiry, so those are not checked here.)
  });
});

describe('storageFromEnv', () => {
  it('picks local disk by default and S3 when a bucket is named', () => {
    expect(storageFromEnv({}, path.join(scratch, 'def')).kind).toBe('local');
    expect(storageFromEnv(fake.env, path.join(scratch, 'def')).kind).toBe('s3');
  });
});
