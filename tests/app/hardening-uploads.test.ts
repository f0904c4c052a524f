// Hostile uploads through the API (issue 6): every bad archive answers with its stable code, leaves no
// row, no temp file and no stored blob, and the server keeps answering. An upload cut off mid-way and
// one over the size limit (413) leave nothing behind; the same upload posted twice at once makes one
// art set; bad images inside a good zip become per-card findings while the run goes on.
import { connect } from 'node:net';
import { readFile } from 'node:fs/promises';
import path from 'node:path';
import sharp from 'sharp';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { RunningServer } from '../../server/server.ts';
import { makeZip } from '../engine/helpers.ts';
import { createWorkspaceFixture, type WorkspaceFixture } from './fixtures.ts';
import { cardPng, filesIn, smallRecipe, startRunsServer, upload, waitForRun, zipOf } from './runs-fixtures.ts';

// Small on purpose so the 413 case is cheap; the README lists the production default (512 MB).
const UPLOAD_MAX_BYTES = 2 * 1024 * 1024;

let server: RunningServer;
let fx: WorkspaceFixture;
let stop: () => Promise<void>;
let tmpDir: string;
let storageRoot: string;
let api: string;
let card: Buffer;

beforeAll(async () => {
  ({ server, stop, tmpDir, storageRoot } = await startRunsServer({ runs: { uploadMaxBytes: UPLOAD_MAX_BYTES } }));
  fx = await createWorkspaceFixture(server.deps.db, server.url);
  api = `/api/workspaces/${fx.workspaceId}`;
  card = await cardPng(7);
});
afterAll(() => stop?.());

async function rowCounts() {
  const db = server.deps.db;
  const [sets, revisions, entries] = await Promise.all([
    db('art_sets').where({ workspace_id: fx.workspaceId }).count<{ count: string }[]>('* as count'),
    db('art_set_revisions').where({ workspace_id: fx.workspaceId }).count<{ count: string }[]>('* as count'),
    db('art_set_entries').join('art_set_revisions', 'art_set_revisions.id', 'art_set_entries.revision_id').where('art_set_revisions.workspace_id', fx.workspaceId).count<{ count: string }[]>('* as count'),
  ]);
  return { sets: Number(sets[0]!.count), revisions: Number(revisions[0]!.count), entries: Number(entries[0]!.count) };
}

async function blobs(): Promise<string[]> {
  return filesIn(path.join(storageRoot, 'ws', fx.workspaceId, 'blobs'));
}

async function serverUp(): Promise<void> {
  const res = await fetch(`${server.url}/api/health`);
  expect(res.status).toBe(200);
}

describe('bad archives through the upload route', () => {
  it('answer with the stable code and leave no rows, temp files or blobs', async () => {
    const cases: Array<[string, Buffer, number, string]> = [
      ['escape', makeZip([{ name: 'ok.png', data: card }, { name: '../../evil.png', data: card }]), 400, 'ARCHIVE_PATH'],
      ['sibling', makeZip([{ name: 'ok.png', data: card }, { name: '../storage2/evil.png', data: card }]), 400, 'ARCHIVE_PATH'],
      ['absolute', makeZip([{ name: '/tmp/evil.png', data: card }]), 400, 'ARCHIVE_PATH'],
      ['backslash', makeZip([{ name: '..\\evil.png', data: card }]), 400, 'ARCHIVE_PATH'],
      ['drive', makeZip([{ name: 'C:/evil.png', data: card }]), 400, 'ARCHIVE_PATH'],
      ['symlink', makeZip([{ name: 'ok.png', data: card }, { name: 'link.png', data: Buffer.from('/etc/passwd'), mode: 0o120777 }]), 400, 'ARCHIVE_SYMLINK'],
      ['nested', makeZip([{ name: 'ok.png', data: card }, { name: 'inner.zip', data: makeZip([{ name: 'a.png', data: card }]) }]), 400, 'ARCHIVE_NESTED'],
      ['garbage', Buffer.from('PK\u0003\u0004 this is not really a zip file at all'), 400, 'ARCHIVE_UNREADABLE'],
      ['truncated', makeZip([{ name: 'ok.png', data: card }, { name: 'two.png', data: card }]).subarray(0, 300), 400, 'ARCHIVE_UNREADABLE'],
      ['empty', makeZip([{ name: 'notes.txt', data: Buffer.from('hello') }]), 400, 'ARCHIVE_EMPTY'],
    ];
    const before = await rowCounts();
    for (const [label, zip, status, code] of cases) {
      const res = await upload(fx.actors.maker, `${api}/art-sets`, [{ field: 'file', name: `${label}.zip`, data: zip }]);
      expect(res.status, label).toBe(status);
      expect(res.body.error.code, label).toBe(code);
      expect(res.body.error.message.length, label).toBeGreaterThan(10);
    }
    expect(await rowCounts()).toEqual(before);
    expect(await filesIn(tmpDir)).toEqual([]);
    expect(await blobs()).toEqual([]);
    // Nothing landed next to the storage or temp folders either.
    expect((await filesIn(path.dirname(storageRoot))).sort()).toEqual(['storage', 'tmp']);
    await serverUp();
  });

  it('a zip bomb is refused with ARCHIVE_RATIO / ARCHIVE_TOO_LARGE from the inflated bytes', async () => {
    // 40 MB of zeros deflates to about 40 KB: over the 200 : 1 ratio once past the 10 MB floor.
    const zeros = Buffer.alloc(40 * 1024 * 1024);
    const honest = makeZip([{ name: 'ok.png', data: card }, { name: 'bomb.png', data: zeros, deflate: true }]);
    const liar = makeZip([{ name: 'ok.png', data: card }, { name: 'bomb.png', data: zeros, deflate: true, declaredSize: 1000 }]);
    const before = await rowCounts();
    const a = await upload(fx.actors.maker, `${api}/art-sets`, [{ field: 'file', name: 'bomb.zip', data: honest }]);
    expect(a.status).toBe(413);
    expect(a.body.error.code).toBe('ARCHIVE_RATIO');
    // The lying header passes the central-directory checks; the bytes counted while inflating do not.
    const b = await upload(fx.actors.maker, `${api}/art-sets`, [{ field: 'file', name: 'liar.zip', data: liar }]);
    expect(b.status).toBe(413);
    expect(b.body.error.code).toBe('ARCHIVE_RATIO');
    expect(await rowCounts()).toEqual(before);
    expect(await filesIn(tmpDir)).toEqual([]);
    expect(await blobs()).toEqual([]);
    await serverUp();
  });

  it('an upload over the size limit answers 413 UPLOAD_TOO_LARGE and keeps no temp file', async () => {
    const before = await rowCounts();
    const res = await upload(fx.actors.maker, `${api}/art-sets`, [{ field: 'file', name: 'huge.zip', data: Buffer.alloc(UPLOAD_MAX_BYTES + 4096, 7) }]);
    expect(res.status).toBe(413);
    expect(res.body.error.code).toBe('UPLOAD_TOO_LARGE');
    expect(await rowCounts()).toEqual(before);
    expect(await filesIn(tmpDir)).toEqual([]);
    await serverUp();
  });

  it('an upload cut off mid-way leaves no temp file, no row, and the server up', async () => {
    const before = await rowCounts();
    const { port } = new URL(server.url);
    const boundary = 'bw-cut-boundary';
    const head = `--${boundary}\r\nContent-Disposition: form-data; name="file"; filename="cut.zip"\r\nContent-Type: application/zip\r\n\r\n`;
    const body = Buffer.concat([Buffer.from(head), makeZip([{ name: 'a.png', data: card }]), Buffer.alloc(200_000, 1)]);
    const declared = body.length + 500_000; // promises more than it sends
    let partial: string[] = [];
    await new Promise<void>((resolve, reject) => {
      const socket = connect(Number(port), '127.0.0.1', () => {
        socket.write(
          [
            `POST ${api}/art-sets HTTP/1.1`,
            `Host: 127.0.0.1:${port}`,
            `Cookie: ${fx.actors.maker.cookie}`,
            `X-CSRF-Token: ${fx.actors.maker.csrfToken}`,
            `Content-Type: multipart/form-data; boundary=${boundary}`,
            `Content-Length: ${declared}`,
            '',
            '',
          ].join('\r\n'),
        );
        socket.write(body, async () => {
          // multer has started writing the part to the temp folder by now.
          for (let i = 0; i < 40 && partial.length === 0; i++) {
            await new Promise((r) => setTimeout(r, 50));
            partial = await filesIn(tmpDir);
          }
          socket.destroy();
        });
      });
      socket.on('close', () => resolve());
      socket.on('error', reject);
    });
    expect(partial).toHaveLength(1);
    // multer removes the partial file once the request is aborted; give it a moment.
    for (let i = 0; i < 40 && (await filesIn(tmpDir)).length > 0; i++) await new Promise((r) => setTimeout(r, 100));
    expect(await filesIn(tmpDir)).toEqual([]);
    expect(await rowCounts()).toEqual(before);
    await serverUp();
  });
});

describe('concurrent uploads', () => {
  it('the same upload posted twice at once makes one art set', async () => {
    const zip = await readFile(await zipOf({ 'twin-01.png': await cardPng(101), 'twin-02.png': await cardPng(102) }));
    const before = await rowCounts();
    const [a, b] = await Promise.all([
      upload(fx.actors.maker, `${api}/art-sets`, [{ field: 'file', name: 'twin.zip', data: zip }]),
      upload(fx.actors.owner, `${api}/art-sets`, [{ field: 'file', name: 'twin.zip', data: zip }]),
    ]);
    expect([a.status, b.status].sort()).toEqual([200, 201]);
    expect(a.body.artSet.id).toBe(b.body.artSet.id);
    expect([a.body.deduplicated, b.body.deduplicated].sort()).toEqual([false, true]);
    const after = await rowCounts();
    expect(after.sets - before.sets).toBe(1);
    expect(after.revisions - before.revisions).toBe(1);
    expect(after.entries - before.entries).toBe(2);
    expect(await filesIn(tmpDir)).toEqual([]);
    expect(await blobs()).toHaveLength(1);
  });
});

describe('bad images inside a good zip', () => {
  it('become per-card error findings; the run finishes with the good cards', async () => {
    const good = await cardPng(3);
    const truncated = (await cardPng(4)).subarray(0, 2000);
    const cmyk = await sharp(await cardPng(5)).toColourspace('cmyk').jpeg().toBuffer();
    const sixteen = await sharp(await cardPng(6)).toColourspace('rgb16').png().toBuffer();
    const alpha = await sharp(await cardPng(8)).removeAlpha().ensureAlpha(0.5).png().toBuffer();
    const rotated = await sharp(await cardPng(9, 0, { w: 350, h: 250 })).jpeg().withMetadata({ orientation: 6 }).toBuffer();
    const files: Record<string, Buffer> = {
      'c01-good.png': good,
      'c02-vector.png': Buffer.from('<svg xmlns="http://www.w3.org/2000/svg" width="250" height="350"/>'),
      'c03-paper.png': Buffer.from('%PDF-1.4\n%%EOF\n'),
      'c04-page.jpg': Buffer.from('<html><body>not art</body></html>'),
      'c05-cut.png': truncated,
      'c06-liar.png': await sharp(good).jpeg().toBuffer(),
      'c07-cmyk.jpg': cmyk,
      'c08-deep.png': sixteen,
      'c09-alpha.png': alpha,
      'c10-exif.jpg': rotated,
    };
    const zip = await readFile(await zipOf(files));
    const up = await upload(fx.actors.maker, `${api}/art-sets`, [{ field: 'file', name: 'mixed.zip', data: zip }]);
    expect(up.status).toBe(201);
    const recipe = (await fx.actors.maker.post(`${api}/recipes`, { settings: smallRecipe('Mixed bag deck') })).body.recipe;
    const start = await fx.actors.maker.post(`${api}/runs`, { recipeId: recipe.id, artSetId: up.body.artSet.id });
    expect(start.status).toBe(201);
    const run = await waitForRun(fx.actors.maker, fx.workspaceId, start.body.run.id);
    expect(run.state).toBe('done');
    expect(run.progress).toMatchObject({ total: 10, done: 5, skipped: 5, failed: 0 });
    const cards = (await fx.actors.maker.get(`${api}/runs/${run.id}/cards`)).body.cards as Array<{ source: string; state: string; findings: Array<{ code: string; severity: string }> }>;
    const errorCode = (source: string) => cards.find((c) => c.source === source)!.findings.filter((f) => f.severity === 'error').map((f) => f.code);
    expect(errorCode('c02-vector.png')).toEqual(['NOT_AN_IMAGE']);
    expect(errorCode('c03-paper.png')).toEqual(['NOT_AN_IMAGE']);
    expect(errorCode('c04-page.jpg')).toEqual(['NOT_AN_IMAGE']);
    expect(errorCode('c05-cut.png')).toEqual(['TRUNCATED']);
    expect(errorCode('c06-liar.png')).toEqual(['EXTENSION_MISMATCH']);
    const codes = (source: string) => cards.find((c) => c.source === source)!.findings.map((f) => f.code);
    expect(codes('c07-cmyk.jpg')).toContain('COLOR_CONVERTED');
    expect(codes('c08-deep.png')).toContain('COLOR_CONVERTED');
    expect(codes('c09-alpha.png')).toContain('TRANSPARENCY_FLATTENED');
    // EXIF orientation 6 turns the stored landscape pixels upright: no TURNED finding is needed.
    expect(codes('c10-exif.jpg')).not.toContain('TURNED');
    expect(cards.filter((c) => c.state === 'done').map((c) => c.source).sort()).toEqual(['c01-good.png', 'c07-cmyk.jpg', 'c08-deep.png', 'c09-alpha.png', 'c10-exif.jpg']);
    await serverUp();
  });

  it('recipes with impossible values answer 400 VALIDATION naming the field', async () => {
    const bad: Array<[Record<string, unknown>, string]> = [
      [{ bleed: { size: -3, unit: 'mm' } }, 'bleed'],
      [{ dpi: 0 }, 'dpi'],
      [{ trim: { width: 90000, height: 88.9, unit: 'mm' } }, 'trim'],
      [{ sheet: { multiple: 0, pad: 'blank' } }, 'sheet'],
      [{ sheet: { multiple: 10_000, pad: 'blank' } }, 'sheet'],
    ];
    for (const [extra, field] of bad) {
      const res = await fx.actors.maker.post(`${api}/recipes`, { settings: smallRecipe('Impossible deck', extra) });
      expect(res.status, field).toBe(400);
      expect(res.body.error.code, field).toBe('VALIDATION');
      expect(res.body.error.message, field).toMatch(new RegExp(field));
    }
  });
});
