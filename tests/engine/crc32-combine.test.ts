// crc32Combine against node:zlib's crc32 of the joined bytes (zlib is the reference implementation of
// the ISO 3309 CRC-32 that zip and PNG use), and a PNG chunk's stored CRC checked through it.
import { randomBytes } from 'node:crypto';
import { crc32 } from 'node:zlib';
import { describe, expect, it } from 'vitest';
import { crc32Combine } from '../../jobs/engine/crc32-combine.ts';
import { CrcMirror } from '../../jobs/engine/zip-writer.ts';

describe('crc32Combine', () => {
  it('gives the CRC-32 of A then B from their CRC-32s, for empty, odd, chunk-sized and large parts', () => {
    for (const [a, b] of [[0, 0], [0, 1], [1, 0], [5, 7], [100, 8192], [8192, 6352], [3, 1 << 20], [17, 65_539], [1 << 20, 12_345]]) {
      const A = randomBytes(a!);
      const B = randomBytes(b!);
      expect(crc32Combine(crc32(A), crc32(B), B.length)).toBe(crc32(Buffer.concat([A, B])));
    }
  });

  it('takes a PNG chunk CRC (type + data, PNG spec 5.3) apart into the data CRC that a zip needs', () => {
    const data = randomBytes(8192);
    const stored = crc32(Buffer.concat([Buffer.from('IDAT', 'latin1'), data]));
    expect(crc32Combine(crc32(Buffer.from('IDAT', 'latin1')), crc32(data), data.length)).toBe(stored);
  });

  it('lets a mirror mix known CRCs with bytes it hashes, and still get the CRC of everything', async () => {
    const parts = [randomBytes(40), randomBytes(8192), randomBytes(8192), randomBytes(333), randomBytes(17)];
    const mirror = new CrcMirror();
    await mirror.write(parts.slice(0, 3), [null, crc32(parts[1]!), null]);
    await mirror.write(parts.slice(3), [crc32(parts[3]!)]);
    expect(mirror.crc).toBe(crc32(Buffer.concat(parts)));
    expect(mirror.size).toBe(parts.reduce((n, p) => n + p.length, 0));
  });
});
