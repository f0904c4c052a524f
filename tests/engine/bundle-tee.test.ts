// The bundle's teed entry (ZipTee): a file's bytes go into the zip while the file is written, and the
// zip comes out byte for byte as if the finished file had been copied in.
import { spawnSync } from 'node:child_process';
import { randomBytes } from 'node:crypto';
import { mkdir, mkdtemp, readdir, readFile, writeFile } from 'node:fs/promises';
import { crc32 } from 'node:zlib';
import { tmpdir } from 'node:os';
import path from 'node:path';
import sharp from 'sharp';
import { describe, expect, it } from 'vitest';
import { FileSink } from '../../jobs/engine/file-io.ts';
import { runEngine } from '../../jobs/engine/run.ts';
import { writeZip, ZipPlacer, ZipTee, type ZipFileEntry } from '../../jobs/engine/zip-writer.ts';
import { parseRecipe } from '../../shared/recipe.ts';

const STAMP = new Date(Date.UTC(2020, 0, 1));

/** Info-ZIP's unzip (Debian package) as the outside check: every entry's CRC-32 and sizes. */
function unzipTest(file: string): void {
  const check = spawnSync('unzip', ['-t', file], { encoding: 'utf8' });
  expect(check.stdout).toContain('No errors detected');
  expect(check.status).toBe(0);
}

/** Writes `pieces` to `file` through a FileSink mirrored into `tee`, a few at a time like the PDF writer. */
async function writeThrough(file: string, pieces: Buffer[], tee: ZipTee): Promise<void> {
  const sink = await FileSink.create(file, tee);
  for (const p of pieces) await (p.length > 1000 ? sink.writev([p]) : sink.write(p));
  await sink.close();
}

/** Byte equality of large Buffers (toEqual compares them element by element, which takes a minute at 3 MB). */
function sameBytes(a: Buffer, b: Buffer): boolean {
  return a.length === b.length && a.equals(b);
}

async function folder(): Promise<string> {
  const dir = await mkdtemp(path.join(tmpdir(), 'bw-tee-'));
  await mkdir(path.join(dir, 'cards'));
  for (const n of [1, 2, 3]) await writeFile(path.join(dir, 'cards', `c${n}.png`), randomBytes(50_000 * n));
  await writeFile(path.join(dir, 'report.csv'), 'source,state\n'.repeat(500));
  return dir;
}

const pieces = [Buffer.from('%PDF-1.4\n'), randomBytes(3 * 1024 * 1024), Buffer.from('small'), randomBytes(70_000), Buffer.from('%%EOF\n')];

describe('bundle zip with a teed entry', () => {
  it('places the bytes as they are written: same zip bytes as copying the finished file, unzip -t clean', async () => {
    const dir = await folder();
    const entries = (tee?: ZipTee, ready?: Promise<unknown>): ZipFileEntry[] => [
      ...[1, 2, 3].map((n) => ({ file: path.join(dir, 'cards', `c${n}.png`), name: `cards/c${n}.png`, compress: false })),
      { file: path.join(dir, 'deck.pdf'), name: 'deck.pdf', compress: false, tee, ready },
      { file: path.join(dir, 'report.csv'), name: 'report.csv', compress: true },
    ];
    const tee = new ZipTee();
    const writing = writeThrough(path.join(dir, 'deck.pdf'), pieces, tee);
    await writeZip(path.join(dir, 'teed.zip'), entries(tee, writing), STAMP);
    expect(tee.complete).toBe(true);
    expect(tee.size).toBe(Buffer.concat(pieces).length);

    await writeZip(path.join(dir, 'copied.zip'), entries(), STAMP);
    expect(sameBytes(await readFile(path.join(dir, 'teed.zip')), await readFile(path.join(dir, 'copied.zip')))).toBe(true);
    unzipTest(path.join(dir, 'teed.zip'));
    expect(sameBytes(spawnSync('unzip', ['-p', path.join(dir, 'teed.zip'), 'deck.pdf'], { maxBuffer: 1 << 26 }).stdout, Buffer.concat(pieces))).toBe(true);
  });

  it('puts stored entries from Buffers another task holds: placed, not read, and the same zip bytes', async () => {
    const dir = await folder();
    const entries: ZipFileEntry[] = [
      ...[1, 2, 3].map((n) => ({ file: path.join(dir, 'cards', `c${n}.png`), name: `cards/c${n}.png`, compress: false })),
      { file: path.join(dir, 'report.csv'), name: 'report.csv', compress: true },
    ];
    let finish!: () => void;
    const placer = new ZipPlacer(new Promise<void>((resolve) => (finish = resolve)));
    const zipping = writeZip(path.join(dir, 'placed.zip'), entries, STAMP, placer);
    // c2 is not put: it is copied from its file once the other task is done.
    for (const n of [1, 3]) {
      const file = path.join(dir, 'cards', `c${n}.png`);
      await placer.put(file, await readFile(file));
    }
    finish();
    await zipping;
    expect([...placer.placed.keys()].sort()).toEqual([0, 2]);
    await writeZip(path.join(dir, 'copied.zip'), entries, STAMP);
    expect(sameBytes(await readFile(path.join(dir, 'placed.zip')), await readFile(path.join(dir, 'copied.zip')))).toBe(true);
    unzipTest(path.join(dir, 'placed.zip'));
  });

  it('copies the finished file instead when an entry before it is deflated (its size is not known in advance)', async () => {
    const dir = await folder();
    const tee = new ZipTee();
    const writing = writeThrough(path.join(dir, 'deck.pdf'), pieces, tee);
    const entries: ZipFileEntry[] = [
      { file: path.join(dir, 'report.csv'), name: 'report.csv', compress: true },
      { file: path.join(dir, 'deck.pdf'), name: 'deck.pdf', compress: false, tee, ready: writing },
    ];
    await writeZip(path.join(dir, 'teed.zip'), entries, STAMP);
    expect(tee.complete).toBe(false);
    await writeZip(path.join(dir, 'copied.zip'), entries.map(({ tee: _, ready: __, ...e }) => e), STAMP);
    expect(sameBytes(await readFile(path.join(dir, 'teed.zip')), await readFile(path.join(dir, 'copied.zip')))).toBe(true);
    unzipTest(path.join(dir, 'teed.zip'));
  });

  it('a run bundle (singles put from the PDF writer\'s reads, PDF teed) equals a copied one and tests clean with unzip', async () => {
    const base = await mkdtemp(path.join(tmpdir(), 'bw-tee-run-'));
    const art = path.join(base, 'art');
    await mkdir(art);
    for (const [i, color] of ['#aa2233', '#2233aa', '#33aa22'].entries()) {
      await writeFile(path.join(art, `card-${i}.png`), await sharp({ create: { width: 250, height: 350, channels: 3, background: color } }).png().toBuffer());
    }
    const recipe = parseRecipe(
      JSON.stringify({ name: 'Tee deck', trim: 'poker', dpi: 100, sheet: { multiple: 1, pad: 'none' }, outputs: { singles: 'png', pdf: true, sheets: { paper: 'letter', marks: true }, proof: true } }),
    );
    const out = path.join(base, 'out');
    await runEngine({ source: art, recipe, outDir: out, cacheDir: null });
    const bundle = path.join(out, 'bundle.zip');
    unzipTest(bundle);
    const names = spawnSync('unzip', ['-Z1', bundle], { encoding: 'utf8' }).stdout.trim().split('\n');
    expect(names).toEqual(['cards/card-0.png', 'cards/card-1.png', 'cards/card-2.png', 'tee-deck.pdf', 'sheets-letter.pdf', 'proof.pdf', 'report.json', 'report.csv']);
    expect(sameBytes(spawnSync('unzip', ['-p', bundle, 'tee-deck.pdf'], { maxBuffer: 1 << 26 }).stdout, await readFile(path.join(out, 'tee-deck.pdf')))).toBe(true);
    // Singles placed from the PDF writer's reads and the PDF teed: the same bytes as copying every finished file.
    const copied = path.join(base, 'copied.zip');
    await writeZip(copied, names.map((n) => ({ file: path.join(out, n), name: n, compress: !/\.(png|pdf)$/.test(n) })), STAMP);
    expect(sameBytes(await readFile(bundle), await readFile(copied))).toBe(true);
  });

  it('the render cache keeps each PNG\'s CRC-32, and a rerun into the same folder makes a bundle equal to a copied one', async () => {
    const base = await mkdtemp(path.join(tmpdir(), 'bw-tee-crc-'));
    const art = path.join(base, 'art');
    await mkdir(art);
    for (const [i, color] of ['#aa2233', '#2233aa'].entries()) {
      await writeFile(path.join(art, `card-${i}.png`), await sharp({ create: { width: 250, height: 350, channels: 3, background: color } }).png().toBuffer());
    }
    const recipe = parseRecipe(JSON.stringify({ name: 'Crc deck', trim: 'poker', dpi: 100, sheet: { multiple: 1, pad: 'none' }, outputs: { singles: 'png', pdf: true, sheets: null, proof: false } }));
    const cacheDir = path.join(base, 'cache');
    await runEngine({ source: art, recipe, outDir: path.join(base, 'one'), cacheDir });
    const jsons = (await readdir(cacheDir)).filter((f) => f.endsWith('.json'));
    expect(jsons).toHaveLength(2);
    for (const f of jsons) {
      const entry = JSON.parse(await readFile(path.join(cacheDir, f), 'utf8')) as { pngCrc32: number };
      expect(entry.pngCrc32).toBe(crc32(await readFile(path.join(cacheDir, f.replace(/\.json$/, '.png')))));
    }
    // The rerun goes into the same folder: the last run's PDF and bundle are removed first, then replaced.
    const out = path.join(base, 'one');
    await runEngine({ source: art, recipe, outDir: out, cacheDir });
    expect((await readdir(out)).sort()).toEqual(['bundle.zip', 'cards', 'crc-deck.pdf', 'report.csv', 'report.json']);
    const bundle = path.join(out, 'bundle.zip');
    unzipTest(bundle);
    const names = spawnSync('unzip', ['-Z1', bundle], { encoding: 'utf8' }).stdout.trim().split('\n');
    const copied = path.join(base, 'copied.zip');
    await writeZip(copied, names.map((n) => ({ file: path.join(out, n), name: n, compress: !/\.(png|pdf)$/.test(n) })), STAMP);
    expect(sameBytes(await readFile(bundle), await readFile(copied))).toBe(true);
  });
});
