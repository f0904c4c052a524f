import { randomBytes } from 'node:crypto';
import { mkdtemp, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ReusedReader } from '../../jobs/engine/file-io.ts';

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
      const got = await reader.readWhole(file);
      expect(got.length, `size ${size}`).toBe(size);
      expect(got.equals(bytes), `size ${size}`).toBe(true);
    }
  });

  it('refuses a file over the limit, and a missing file fails like open', async () => {
    const file = path.join(dir, 'big.bin');
    await writeFile(file, randomBytes(4096));
    const reader = new ReusedReader();
    await expect(reader.readWhole(file, 4095)).rejects.toThrow(RangeError);
    expect((await reader.readWhole(file, 4096)).length).toBe(4096);
    await expect(reader.readWhole(path.join(dir, 'missing.bin'))).rejects.toMatchObject({ code: 'ENOENT' });
  });
});
