import { randomBytes } from 'node:crypto';
import { mkdtemp, readdir, readFile, rm, stat, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { linkOrCopy, ReusedReader } from '../../jobs/engine/file-io.ts';

let dir: string;
beforeAll(async () => {
  dir = await mkdtemp(path.join(tmpdir(), 'bw-file-io-'));
});
afterAll(async () => {
  await rm(dir, { recursive: true, force: true });
});

describe('ReusedReader', () => {
  it('reads files of any size whole, one after another, through its one buffer', async () => {
    const MB = 1024 * 1024;
    // Empty, small, exactly the first buffer, one byte over it (a read that fills the buffer must go
    // on), several growths, then small again after the buffer grew.
    const sizes = [0, 1, 1000, 2 * MB, 2 * MB + 1, 5 * MB + 17, 3, MB];
    const reader = new ReusedReader();
    for (const [i, size] of sizes.entries()) {
      const bytes = randomBytes(size);
      const file = path.join(dir, `f${i}.bin`);
      await writeFile(file, bytes);
      const got = reader.readWhole(file);
      expect(got.length, `size ${size}`).toBe(size);
      expect(got.equals(bytes), `size ${size}`).toBe(true);
    }
  });

  it('refuses a file over the limit, and a missing file fails like open', async () => {
    const file = path.join(dir, 'big.bin');
    await writeFile(file, randomBytes(4096));
    const reader = new ReusedReader();
    expect(() => reader.readWhole(file, 4095)).toThrow(RangeError);
    expect(reader.readWhole(file, 4096).length).toBe(4096);
    expect(() => reader.readWhole(path.join(dir, 'missing.bin'))).toThrow(expect.objectContaining({ code: 'ENOENT' }));
  });
});

describe('linkOrCopy', () => {
  it('links to a new name, replaces a file already there with the link, and leaves no temp file', async () => {
    const sub = await mkdtemp(path.join(dir, 'link-'));
    const source = path.join(sub, 'render.png');
    await writeFile(source, randomBytes(5000));
    const target = path.join(sub, 'single.png');
    expect(await linkOrCopy(source, target)).toBe('link');
    expect((await stat(target)).ino).toBe((await stat(source)).ino);

    const other = path.join(sub, 'other.png');
    await writeFile(other, randomBytes(300));
    expect(await linkOrCopy(other, target)).toBe('link');
    expect((await stat(target)).ino).toBe((await stat(other)).ino);
    expect((await stat(source)).nlink).toBe(1); // the first link was replaced, not written through
    expect((await readdir(sub)).sort()).toEqual(['other.png', 'render.png', 'single.png']);
  });

  // /dev/shm is a tmpfs on Linux, another file system than the temp folder here (checked, not assumed).
  it('copies where no link can be made (another file system)', async () => {
    const shm = await mkdtemp('/dev/shm/bw-link-');
    try {
      const source = path.join(shm, 'render.png');
      const bytes = randomBytes(7000);
      await writeFile(source, bytes);
      const target = path.join(dir, 'copied.png');
      expect((await stat(shm)).dev).not.toBe((await stat(dir)).dev);
      expect(await linkOrCopy(source, target)).toBe('copy');
      expect((await readFile(target)).equals(bytes)).toBe(true);
      expect(await linkOrCopy(source, target)).toBe('copy'); // over the earlier copy
      expect((await readdir(dir)).filter((n) => n.startsWith('copied'))).toEqual(['copied.png']);
    } finally {
      await rm(shm, { recursive: true, force: true });
    }
  });
});
