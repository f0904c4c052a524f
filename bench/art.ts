// Deterministic benchmark art: noisy painted interiors inside a solid frame, 750 x 1050 (poker trim at
// 300 DPI), every tenth card landscape (1050 x 750). Saved the way many drawing tools export (zlib
// level 6, no row filtering), which makes them about as large as real card art (~1.7 MB each).
import { existsSync } from 'node:fs';
import { mkdir, readdir, readFile, rename, writeFile } from 'node:fs/promises';
import { createWriteStream } from 'node:fs';
import path from 'node:path';
import sharp from 'sharp';
import yazl from 'yazl';

export const ART_SEED = 0x5eed_ca2d;
export const TRIM_PX = { w: 750, h: 1050 };
const FRAME_PX = 28;
// Noise of +-NOISE levels on a smooth painted field: the amount that gives real-art file sizes.
const NOISE = 2;

/** mulberry32: a small, fast, seeded generator (public domain); same seed, same art. */
export function rng(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

export function isLandscape(index: number): boolean {
  return index % 10 === 9;
}

export function cardName(index: number): string {
  return `card-${String(index + 1).padStart(4, '0')}.png`;
}

/** Raw 8-bit RGB pixels of card `index`. */
export function cardPixels(index: number): { data: Buffer; w: number; h: number } {
  const next = rng(ART_SEED ^ Math.imul(index + 1, 0x9e3779b1));
  const w = isLandscape(index) ? TRIM_PX.h : TRIM_PX.w;
  const h = isLandscape(index) ? TRIM_PX.w : TRIM_PX.h;
  const frame = [0, 1, 2].map(() => Math.floor(next() * 90));
  // Four corner colours blended across the interior, plus a few soft "brush" waves.
  const corners = Array.from({ length: 4 }, () => [0, 1, 2].map(() => 60 + next() * 170));
  const waves = Array.from({ length: 3 }, () => ({ fx: (next() * 6 + 1) / w, fy: (next() * 6 + 1) / h, phase: next() * 6.283, amp: 10 + next() * 25, ch: Math.floor(next() * 3) }));
  // Per channel and column: the wave term is rowWave(y) * colWave(x), summed over that channel's waves.
  const colWave = waves.map((wv) => Float64Array.from({ length: w }, (_, x) => Math.cos(6.283 * wv.fx * x * 2)));
  const data = Buffer.alloc(w * h * 3);
  const base = new Float64Array(3);
  const step = new Float64Array(3);
  let noise = (ART_SEED + index * 7919) >>> 0;
  for (let y = 0; y < h; y++) {
    const v = y / (h - 1);
    const rowWave = waves.map((wv) => wv.amp * Math.sin(6.283 * wv.fy * y * 3 + wv.phase));
    for (let c = 0; c < 3; c++) {
      const left = (1 - v) * corners[0]![c]! + v * corners[2]![c]!;
      const right = (1 - v) * corners[1]![c]! + v * corners[3]![c]!;
      base[c] = left;
      step[c] = (right - left) / (w - 1);
    }
    const inside = y >= FRAME_PX && y < h - FRAME_PX;
    for (let x = 0; x < w; x++) {
      const o = (y * w + x) * 3;
      if (!inside || x < FRAME_PX || x >= w - FRAME_PX) {
        data[o] = frame[0]!;
        data[o + 1] = frame[1]!;
        data[o + 2] = frame[2]!;
        continue;
      }
      for (let c = 0; c < 3; c++) {
        let value = base[c]! + step[c]! * x;
        for (let k = 0; k < waves.length; k++) if (waves[k]!.ch === c) value += rowWave[k]! * colWave[k]![x]!;
        // xorshift32 for the per-pixel grain: cheaper than the main generator, still deterministic.
        noise ^= noise << 13;
        noise ^= noise >>> 17;
        noise ^= noise << 5;
        value += ((noise >>> 0) % (2 * NOISE + 1)) - NOISE;
        data[o + c] = value < 0 ? 0 : value > 255 ? 255 : Math.round(value);
      }
    }
  }
  return { data, w, h };
}

export async function cardPng(index: number): Promise<Buffer> {
  const { data, w, h } = cardPixels(index);
  return sharp(data, { raw: { width: w, height: h, channels: 3 } })
    .png({ compressionLevel: 6, adaptiveFiltering: false })
    .withMetadata({ density: 300 })
    .toBuffer();
}

/**
 * Makes sure `dir` holds cards 1..count (generating only the missing ones; files are the same for
 * the same index on every machine) and returns their paths in order.
 */
export async function ensureArt(dir: string, count: number, onProgress?: (done: number) => void): Promise<string[]> {
  await mkdir(dir, { recursive: true });
  const have = new Set(await readdir(dir));
  const paths: string[] = [];
  for (let i = 0; i < count; i++) {
    const name = cardName(i);
    const target = path.join(dir, name);
    if (!have.has(name)) {
      await writeFile(`${target}.tmp`, await cardPng(i));
      await rename(`${target}.tmp`, target);
    }
    paths.push(target);
    onProgress?.(i + 1);
  }
  return paths;
}

/** A stored (not deflated: PNGs do not shrink) zip of the given files at its root, made once. */
export async function ensureZip(zipPath: string, files: readonly string[]): Promise<void> {
  if (existsSync(zipPath)) return;
  const zip = new yazl.ZipFile();
  for (const f of files) zip.addBuffer(await readFile(f), path.basename(f), { compress: false, mtime: new Date(Date.UTC(2020, 0, 1)) });
  zip.end();
  await new Promise<void>((resolve, reject) => {
    const out = createWriteStream(`${zipPath}.tmp`);
    out.on('close', () => resolve());
    out.on('error', reject);
    zip.outputStream.on('error', reject).pipe(out);
  });
  await rename(`${zipPath}.tmp`, zipPath);
}
