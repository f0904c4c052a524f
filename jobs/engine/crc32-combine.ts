// CRC-32 (ISO 3309, the CRC of zip and PNG alike) of joined data from the CRC-32s of its parts, without
// reading the data again: zlib's crc32_combine, which node:zlib does not offer. In GF(2) modulo the
// reflected polynomial, appending n bytes multiplies a CRC by x^(8n) (zlib's crc32.c, multmodp and
// x2nmodp; written from memory of that file and checked against node:zlib's crc32 in
// tests/engine/crc32-combine.test.ts).
const POLY = 0xedb88320;

/** a(x) * b(x) modulo the CRC polynomial. */
function multmodp(a: number, b: number): number {
  let m = 0x80000000;
  let p = 0;
  for (;;) {
    if (a & m) {
      p ^= b;
      if ((a & (m - 1)) === 0) break;
    }
    m >>>= 1;
    b = b & 1 ? (b >>> 1) ^ POLY : b >>> 1;
  }
  return p >>> 0;
}

// X2N[k] = x^(2^k) modulo the polynomial.
const X2N: number[] = [];
for (let k = 0, p = 0x40000000; k < 32; k++) {
  X2N.push(p);
  p = multmodp(p, p);
}

// x^(8n) for the lengths seen most (a PNG's IDAT chunks are nearly all one size), kept and bounded.
const SHIFTS_KEPT = 64;
const shifts = new Map<number, number>();

/** x^(8n) modulo the polynomial: the factor that appends n zero bytes to a CRC. */
function shiftOf(bytes: number): number {
  const kept = shifts.get(bytes);
  if (kept !== undefined) return kept;
  let p = 0x80000000;
  // 8 bits a byte: start at X2N[3], one table step per bit of `bytes`.
  for (let n = bytes, k = 3; n > 0; n = Math.floor(n / 2), k++) if (n % 2) p = multmodp(X2N[k % 32]!, p);
  if (shifts.size >= SHIFTS_KEPT) shifts.delete(shifts.keys().next().value!);
  shifts.set(bytes, p);
  return p;
}

/** CRC-32 of A followed by B, from crcA, crcB and the length of B in bytes. */
export function crc32Combine(crcA: number, crcB: number, lengthB: number): number {
  return (multmodp(shiftOf(lengthB), crcA) ^ crcB) >>> 0;
}
