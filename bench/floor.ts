// C, the floor: the least a sharp script can do per card. Two cards in flight, each extended by the
// bleed and PNG-encoded with sharp's defaults; nothing else (no turn, no checks, no report).
// Usage: tsx bench/floor.ts <in-dir> <out-dir> <count>
import { mkdir, readdir } from 'node:fs/promises';
import path from 'node:path';
import sharp from 'sharp';

const [inDir, outDir, countText] = process.argv.slice(2);
if (!inDir || !outDir || !countText) throw new Error('usage: floor.ts <in-dir> <out-dir> <count>');
const files = (await readdir(inDir)).filter((f) => f.endsWith('.png')).sort().slice(0, Number(countText));
await mkdir(outDir, { recursive: true });
// 1/8 in at 300 DPI is 37.5 px: 37 on one side, 38 on the other, for 825 x 1125.
const bleed = { top: 37, bottom: 38, left: 37, right: 38, background: '#000000' };
let next = 0;
const worker = async () => {
  while (next < files.length) {
    const name = files[next++]!;
    await sharp(path.join(inDir, name)).extend(bleed).png().toFile(path.join(outDir, name));
  }
};
await Promise.all([worker(), worker()]);
