import { mkdtemp, readdir, writeFile, mkdir, symlink } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import yazl from 'yazl';
import { openArtSet, readEntry, safeEntryName } from '../../jobs/engine/archive.ts';
import { BleedwrightError } from '../../shared/errors.ts';
import { makeZip, solidPng } from './helpers.ts';

let dir: string;
let png: Buffer;
beforeAll(async () => {
  dir = await mkdtemp(path.join(tmpdir(), 'bw-archive-'));
  png = await solidPng(20, 28, '#336699');
});

async function zipFile(name: string, data: Buffer): Promise<string> {
  const file = path.join(dir, name);
  await writeFile(file, data);
  return file;
}

async function codeOf(promise: Promise<unknown>): Promise<string> {
  try {
    await promise;
  } catch (err) {
    expect(err).toBeInstanceOf(BleedwrightError);
    return (err as BleedwrightError).code;
  }
  return 'NO_ERROR';
}

describe('hostile archives are refused with stable codes', () => {
  it('refuses escaping, absolute, backslash and drive-letter names (REFERENCES.md unzipper pitfalls)', async () => {
    const cases: Array<[string, string]> = [
      ['dotdot.zip', '../evil.png'],
      ['deep.zip', 'cards/../../evil.png'],
      ['sibling.zip', '../out2/x.png'],
      ['absolute.zip', '/etc/evil.png'],
      ['backslash.zip', '..\\evil.png'],
      ['drive.zip', 'C:/evil.png'],
    ];
    for (const [file, name] of cases) {
      const zip = await zipFile(file, makeZip([{ name: 'ok.png', data: png }, { name, data: png }]));
      expect(await codeOf(openArtSet(zip)), name).toBe('ARCHIVE_PATH');
    }
    expect(safeEntryName('cards/./a.png')).toBe('cards/a.png');
    expect(safeEntryName('a/../b.png')).toBe('b.png');
  });

  it('refuses a symlink entry (Unix mode S_IFLNK in the external attributes)', async () => {
    const zip = await zipFile('link.zip', makeZip([{ name: 'ok.png', data: png }, { name: 'link.png', data: Buffer.from('/etc/passwd'), mode: 0o120777 }]));
    expect(await codeOf(openArtSet(zip))).toBe('ARCHIVE_SYMLINK');
  });

  it('refuses a symlink written by yazl too', async () => {
    const z = new yazl.ZipFile();
    z.addBuffer(png, 'ok.png');
    z.addBuffer(Buffer.from('../../secret'), 'sneaky.png', { mode: 0o120777 });
    z.end();
    const chunks: Buffer[] = [];
    for await (const c of z.outputStream) chunks.push(c as Buffer);
    expect(await codeOf(openArtSet(await zipFile('yazl-link.zip', Buffer.concat(chunks))))).toBe('ARCHIVE_SYMLINK');
  });

  it('refuses a nested archive', async () => {
    const inner = makeZip([{ name: 'a.png', data: png }]);
    const zip = await zipFile('nested.zip', makeZip([{ name: 'ok.png', data: png }, { name: 'more/cards.zip', data: inner }]));
    expect(await codeOf(openArtSet(zip))).toBe('ARCHIVE_NESTED');
  });

  it('refuses an entry that inflates past the limit, also when its declared size lies', async () => {
    const bomb = Buffer.alloc(5 * 1024 * 1024); // zeros: deflates about 1000 to 1
    const honest = await zipFile('bomb.zip', makeZip([{ name: 'ok.png', data: png }, { name: 'big.png', data: bomb, deflate: true }]));
    expect(await codeOf(openArtSet(honest, { maxEntryBytes: 1024 * 1024 }))).toBe('ARCHIVE_TOO_LARGE');
    expect(await codeOf(openArtSet(honest, { ratioFloorBytes: 1024 * 1024 }))).toBe('ARCHIVE_RATIO');

    const liar = await zipFile('liar.zip', makeZip([{ name: 'ok.png', data: png }, { name: 'big.png', data: bomb, deflate: true, declaredSize: 1000 }]));
    const set = await openArtSet(liar, { maxEntryBytes: 1024 * 1024 });
    expect(await codeOf(readEntry(set, 'big.png'))).toBe('ARCHIVE_TOO_LARGE');
  });

  it('refuses too many entries', async () => {
    const many = Array.from({ length: 12 }, (_, i) => ({ name: `c${i}.png`, data: png }));
    expect(await codeOf(openArtSet(await zipFile('many.zip', makeZip(many)), { maxEntries: 10 }))).toBe('ARCHIVE_TOO_MANY_ENTRIES');
  });

  it('reports garbage bytes as ARCHIVE_UNREADABLE and a missing source as SOURCE_NOT_FOUND', async () => {
    expect(await codeOf(openArtSet(await zipFile('garbage.zip', Buffer.from('this is not a zip at all, just text'))))).toBe('ARCHIVE_UNREADABLE');
    expect(await codeOf(openArtSet(path.join(dir, 'nope.zip')))).toBe('SOURCE_NOT_FOUND');
  });

  it('reads stored and deflated entries to the same bytes, and refuses a stored entry whose data was damaged', async () => {
    const build = (compress: boolean) =>
      new Promise<Buffer>((resolve, reject) => {
        const zip = new yazl.ZipFile();
        zip.addBuffer(png, 'card.png', { compress });
        zip.end();
        const chunks: Buffer[] = [];
        zip.outputStream.on('data', (c: Buffer) => chunks.push(c)).on('end', () => resolve(Buffer.concat(chunks))).on('error', reject);
      });
    const stored = await build(false);
    const stSet = await openArtSet(await zipFile('stored.zip', stored));
    const dfSet = await openArtSet(await zipFile('deflated.zip', await build(true)));
    expect(await readEntry(stSet, 'card.png')).toEqual(png);
    expect(await readEntry(dfSet, 'card.png')).toEqual(png);
    // Flip one byte inside the stored data (the PNG's own bytes start after the 30-byte local header
    // and the 8-byte name): the CRC-32 in the directory no longer matches (APPNOTE.TXT 4.4.7).
    const damaged = Buffer.from(stored);
    damaged[30 + 'card.png'.length + 40] ^= 0xff;
    const bad = await openArtSet(await zipFile('damaged.zip', damaged));
    expect(await codeOf(readEntry(bad, 'card.png'))).toBe('ARCHIVE_UNREADABLE');
  });

  it('never extracts anything: the folder holding the zip gains no files', async () => {
    const before = (await readdir(dir)).sort();
    await codeOf(openArtSet(path.join(dir, 'dotdot.zip')));
    await codeOf(openArtSet(path.join(dir, 'sibling.zip')));
    expect((await readdir(dir)).sort()).toEqual(before);
    expect((await readdir(path.dirname(dir))).includes('evil.png')).toBe(false);
  });
});

describe('reading an art set', () => {
  it('strips one top folder, skips OS junk and says so, parses the manifest', async () => {
    const manifest = 'file,copies,back,title\nb.png,2,,Bee\na.png,,,\n';
    const zip = await zipFile(
      'set.zip',
      makeZip([
        { name: 'set/a.png', data: png },
        { name: 'set/b.png', data: png },
        { name: 'set/card-back.png', data: png },
        { name: 'set/manifest.csv', data: Buffer.from(manifest) },
        { name: 'set/notes.txt', data: Buffer.from('hi') },
        { name: 'set/.DS_Store', data: Buffer.from('x') },
        { name: '__MACOSX/set/._a.png', data: Buffer.from('x') },
        { name: 'set/Thumbs.db', data: Buffer.from('x') },
      ]),
    );
    const set = await openArtSet(zip);
    expect(set.root).toBe('set');
    expect(set.entries.map((e) => `${e.path}:${e.kind}`).sort()).toEqual(['a.png:image', 'b.png:image', 'card-back.png:back-candidate', 'manifest.csv:manifest']);
    expect(set.skipped.map((s) => s.path).sort()).toEqual(['__MACOSX/set/._a.png', 'set/.DS_Store', 'set/Thumbs.db', 'set/notes.txt']);
    expect(set.manifest).toEqual([
      { file: 'b.png', copies: 2, back: null, title: 'Bee', row: 2 },
      { file: 'a.png', copies: 1, back: null, title: null, row: 3 },
    ]);
    expect((await readEntry(set, 'a.png')).equals(png)).toBe(true);
  });

  it('rejects a manifest naming unknown files or bad copies, with the row number', async () => {
    const bad = async (csv: string) => codeAndMessage(openArtSet(await zipFile(`m${Math.random()}.zip`, makeZip([{ name: 'a.png', data: png }, { name: 'manifest.csv', data: Buffer.from(csv) }]))));
    expect(await bad('file,copies\na.png,1\nzzz.png,1\n')).toBe('MANIFEST_INVALID: manifest.csv row 3: file "zzz.png" is not in the art set');
    expect(await bad('file,copies\na.png,-2\n')).toMatch(/^MANIFEST_INVALID: manifest.csv row 2: copies "-2"/);
    expect(await bad('file,copies\na.png,1001\n')).toMatch(/^MANIFEST_INVALID: manifest.csv row 2: copies/);
  });

  it('reads a folder without following symlinks', async () => {
    const folder = path.join(dir, 'folder');
    await mkdir(path.join(folder, 'inner'), { recursive: true });
    await writeFile(path.join(folder, 'inner', 'a.png'), png);
    await writeFile(path.join(folder, 'inner', 'b.png'), png);
    await symlink('/etc/hostname', path.join(folder, 'inner', 'link.png'));
    const set = await openArtSet(folder);
    expect(set.root).toBe('inner');
    expect(set.entries.map((e) => e.path).sort()).toEqual(['a.png', 'b.png']);
    expect(set.skipped.map((s) => s.path)).toEqual(['inner/link.png']);
  });
});

async function codeAndMessage(promise: Promise<unknown>): Promise<string> {
  try {
    await promise;
  } catch (err) {
    return (err as BleedwrightError).toLine();
  }
  return 'NO_ERROR';
}
