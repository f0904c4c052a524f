import { execFile } from 'node:child_process';
import { mkdtemp, rm, stat } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { promisify } from 'node:util';
import v8 from 'node:v8';
import vm from 'node:vm';
import sharp from 'sharp';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { writeCombinedPdf, type PdfPage } from '../../jobs/engine/pdf.ts';

const run = promisify(execFile);

// Measure live memory, not garbage awaiting collection: collect before each sample.
v8.setFlagsFromString('--expose-gc');
const collectGarbage = vm.runInNewContext('gc') as () => void;

let dir: string;
const distinct: string[] = [];

beforeAll(async () => {
  dir = await mkdtemp(path.join(tmpdir(), 'bw-pdf-scale-'));
  // 300 distinct noisy card images (incompressible, ~170 KB each), so the PDF is ~40 MB and an
  // in-memory writer would have to hold all of it.
  const width = 200;
  const height = 280;
  for (let n = 0; n < 300; n++) {
    const buf = Buffer.alloc(width * height * 3);
    let x = Math.imul(n + 1, 2654435761);
    for (let i = 0; i < buf.length; i++) {
      x = (Math.imul(x, 1103515245) + 12345) >>> 0;
      buf[i] = (x >>> 16) & 0xff;
    }
    const file = path.join(dir, `card-${String(n).padStart(3, '0')}.png`);
    await sharp(buf, { raw: { width, height, channels: 3 } }).png({ compressionLevel: 1 }).toFile(file);
    distinct.push(file);
  }
});

afterAll(async () => {
  await rm(dir, { recursive: true, force: true });
});

describe('writeCombinedPdf at scale', () => {
  it('streams a 1,000-page PDF with bounded memory', async () => {
    // 300 distinct fronts, copies of some, a common back every 4th page, and blank padding.
    const pages: PdfPage[] = [];
    for (let i = 0; pages.length < 1000; i++) {
      if (i % 4 === 3) pages.push({ kind: 'card', pngPath: distinct[0] });
      else if (i % 97 === 0) pages.push({ kind: 'blank' });
      else pages.push({ kind: 'card', pngPath: distinct[i % distinct.length] });
    }
    const outPath = path.join(dir, 'big.pdf');
    const tmpPath = `${outPath}.tmp`;

    collectGarbage();
    const base = process.memoryUsage();
    const baseline = base.heapUsed + base.arrayBuffers;
    let peak = 0;
    let memorySamples = 0;
    const tmpSizes: number[] = [];
    let filesRead = 0;
    // Sampled from inside the writer (it hands over each distinct PNG as it writes that image), every
    // 10th file: the samples do not depend on how fast this machine writes.
    const onPngFile = async (): Promise<void> => {
      if (filesRead++ % 10 !== 0) return;
      collectGarbage();
      const m = process.memoryUsage();
      peak = Math.max(peak, m.heapUsed + m.arrayBuffers - baseline);
      memorySamples++;
      tmpSizes.push((await stat(tmpPath)).size);
    };
    const started = Date.now();
    const result = await writeCombinedPdf({
      pages,
      pagePt: { w: 198, h: 270 },
      bleedPt: 9,
      title: 'Scale deck',
      outPath,
      onPngFile,
    });
    const elapsed = Date.now() - started;

    expect(result.pages).toBe(1000);
    const size = (await stat(outPath)).size;
    expect(size).toBeGreaterThan(30 * 1024 * 1024);
    // The output file grew on disk while pages were still being written (streamed, not saved at the end).
    const growing = tmpSizes.filter((s) => s > 0 && s < size);
    expect(new Set(growing).size).toBeGreaterThan(3);
    // Live heap plus Buffer memory grew far less than the PDF's size (an in-memory writer needs >= size).
    // The writer may hold its 4 MiB write buffer plus one image and the GC's slack, so the bound is a
    // third of the ~40 MB file: still far below what a whole-document writer needs.
    const distinctCards = new Set(pages.flatMap((p) => (p.kind === 'card' ? [p.pngPath] : []))).size;
    expect(filesRead).toBe(distinctCards);
    expect(memorySamples).toBe(Math.ceil(distinctCards / 10));
    expect(peak).toBeLessThan(size / 3);

    const { stdout: info } = await run('pdfinfo', [outPath]);
    expect(info).toMatch(/^Pages:\s+1000$/m);
    const { stdout: check } = await run('qpdf', ['--check', outPath], { maxBuffer: 16 * 1024 * 1024 });
    expect(check).toContain('No syntax or stream encoding errors found');
    // Each distinct image stored once: pdfimages lists one row per card page but one object id per image.
    const cardPaths = new Set(pages.flatMap((p) => (p.kind === 'card' ? [p.pngPath] : [])));
    expect(cardPaths.size).toBeGreaterThan(200);
    const { stdout: list } = await run('pdfimages', ['-list', outPath], { maxBuffer: 16 * 1024 * 1024 });
    const ids = new Set(
      list
        .split('\n')
        .slice(2)
        .filter((l) => l.trim())
        .map((l) => l.trim().split(/\s+/)[10]),
    );
    expect(ids.size).toBe(cardPaths.size);
    console.log(`1000 pages, ${(size / 1e6).toFixed(1)} MB in ${elapsed} ms, peak growth ${(peak / 1e6).toFixed(1)} MB`);
  });
});
