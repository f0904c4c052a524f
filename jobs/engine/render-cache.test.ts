// The render cache behind reruns (runEngine cacheDir) and the bundle's zip writer.
import { spawnSync } from 'node:child_process';
import { createWriteStream } from 'node:fs';
import { link, mkdir, mkdtemp, readdir, readFile, stat, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import path from 'node:path';
import sharp from 'sharp';
import { describe, expect, it } from 'vitest';
import yazl from 'yazl';
import { parseRecipe } from '../../shared/recipe.ts';
import { runEngine } from './run.ts';
import { writeZip } from './zip-writer.ts';

const recipe = parseRecipe(
  JSON.stringify({ name: 'Cache deck', trim: 'poker', dpi: 100, sheet: { multiple: 1, pad: 'none' }, outputs: { singles: 'png', pdf: true, sheets: null, proof: false } }),
);

function art(color: string): Promise<Buffer> {
  return sharp({ create: { width: 250, height: 350, channels: 3, background: color } }).png().toBuffer();
}

async function artSet(files: Record<string, Buffer>): Promise<string> {
  const dir = await mkdtemp(path.join(tmpdir(), 'bw-cache-art-'));
  for (const [name, data] of Object.entries(files)) await writeFile(path.join(dir, name), data);
  return dir;
}

/** A stored zip of the files (what a desktop archiver makes of PNGs). */
async function zipOf(files: Record<string, Buffer>): Promise<string> {
  const file = path.join(await mkdtemp(path.join(tmpdir(), 'bw-cache-zip-')), 'art.zip');
  const zip = new yazl.ZipFile();
  for (const [name, data] of Object.entries(files)) zip.addBuffer(data, name, { compress: false });
  zip.end();
  await new Promise<void>((resolve, reject) => {
    zip.outputStream.pipe(createWriteStream(file)).on('close', resolve).on('error', reject);
  });
  return file;
}

async function renders(cacheDir: string): Promise<string[]> {
  return (await readdir(cacheDir)).filter((f) => f.endsWith('.png')).sort();
}

async function cards(outDir: string): Promise<Record<string, Buffer>> {
  const names = (await readdir(path.join(outDir, 'cards'))).sort();
  return Object.fromEntries(await Promise.all(names.map(async (n) => [n, await readFile(path.join(outDir, 'cards', n))] as const)));
}

describe('render cache', () => {
  it('reuses unchanged cards on a rerun and renders only the changed one, with the same outputs as no cache', async () => {
    const base = await mkdtemp(path.join(tmpdir(), 'bw-cache-'));
    const cacheDir = path.join(base, 'cache');
    const first = await artSet({ 'a.png': await art('#aa2233'), 'b.png': await art('#2233aa') });
    await runEngine({ source: first, recipe, outDir: path.join(base, 'one'), cacheDir });
    const cached = (await readdir(cacheDir)).filter((f) => f.endsWith('.png')).sort();
    expect(cached).toHaveLength(2);
    const stamps = await Promise.all(cached.map(async (f) => (await stat(path.join(cacheDir, f))).mtimeMs));

    // b.png fixed: one new render; a.png's cached file is left as it was.
    const second = await artSet({ 'a.png': await art('#aa2233'), 'b.png': await art('#22aa33') });
    const rerun = await runEngine({ source: second, recipe, outDir: path.join(base, 'two'), cacheDir });
    const after = (await readdir(cacheDir)).filter((f) => f.endsWith('.png')).sort();
    expect(after).toHaveLength(3);
    for (const [i, f] of cached.entries()) expect((await stat(path.join(cacheDir, f))).mtimeMs).toBe(stamps[i]);
    expect(rerun.report.totals.cards).toBe(2);

    // Same bytes as a run without any cache, and the findings survive the round trip.
    const plain = await runEngine({ source: second, recipe, outDir: path.join(base, 'plain'), cacheDir: null });
    expect(await cards(path.join(base, 'two'))).toEqual(await cards(path.join(base, 'plain')));
    expect(rerun.report.cards).toEqual(plain.report.cards);

    // A recipe change that alters pixels (resolution) misses the cache.
    await runEngine({ source: second, recipe: { ...recipe, dpi: 120 }, outDir: path.join(base, 'dpi'), cacheDir });
    expect((await readdir(cacheDir)).filter((f) => f.endsWith('.png'))).toHaveLength(5);
  });

  it('finds unchanged zip entries by their CRC-32 and sizes, and links read-only singles to the cached renders', async () => {
    const base = await mkdtemp(path.join(tmpdir(), 'bw-cache-'));
    const cacheDir = path.join(base, 'cache');
    const a = await art('#aa2233');
    await runEngine({ source: await zipOf({ 'a.png': a, 'b.png': await art('#2233aa') }), recipe, outDir: path.join(base, 'one'), cacheDir });
    const first = await renders(cacheDir);
    expect(first).toHaveLength(2);

    // Each PNG single is the cached render itself (same inode), a read-only file so an edit in place
    // cannot change the cache behind the next run; the rerun's singles too.
    const single = await stat(path.join(base, 'one', 'cards', 'a.png'));
    const inodes = await Promise.all(first.map(async (f) => (await stat(path.join(cacheDir, f))).ino));
    expect(inodes).toContain(single.ino);
    expect(single.nlink).toBe(2);
    expect(single.mode & 0o222).toBe(0);

    // A new zip with b.png fixed: one new render, a.png found by its directory entry.
    const fixed = await zipOf({ 'a.png': a, 'b.png': await art('#22aa33') });
    const rerun = await runEngine({ source: fixed, recipe, outDir: path.join(base, 'two'), cacheDir });
    expect(await renders(cacheDir)).toHaveLength(3);
    for (const name of ['a.png', 'b.png']) expect((await stat(path.join(base, 'two', 'cards', name))).mode & 0o222, name).toBe(0);
    const plain = await runEngine({ source: fixed, recipe, outDir: path.join(base, 'plain'), cacheDir: null });
    expect(await cards(path.join(base, 'two'))).toEqual(await cards(path.join(base, 'plain')));
    expect(rerun.report.cards).toEqual(plain.report.cards);
    for (const name of ['bundle.zip', 'cache-deck.pdf']) {
      expect(await readFile(path.join(base, 'two', name))).toEqual(await readFile(path.join(base, 'plain', name)));
    }

    // Without a cache the singles are the run's own renders: one link each, and writable.
    const own = await stat(path.join(base, 'plain', 'cards', 'a.png'));
    expect(own.nlink).toBe(1);
    expect(own.mode & 0o200).toBe(0o200);
  });

  it('a rerun whose changed cards include broken art makes the outputs of a run without cache', async () => {
    const base = await mkdtemp(path.join(tmpdir(), 'bw-cache-'));
    const cacheDir = path.join(base, 'cache');
    const [a, b, c, d] = await Promise.all(['#aa2233', '#2233aa', '#33aa22', '#777777'].map(art));
    await runEngine({ source: await zipOf({ 'a.png': a!, 'b.png': b!, 'c.png': c!, 'd.png': d! }), recipe, outDir: path.join(base, 'one'), cacheDir });

    // a.png changed and c.png broken: b and d come from the cache, a is rendered, c is left out.
    const files = { 'a.png': await art('#aa9933'), 'b.png': b!, 'c.png': Buffer.from('not a picture'), 'd.png': d! };
    const rerun = await runEngine({ source: await zipOf(files), recipe, outDir: path.join(base, 'two'), cacheDir });
    const plain = await runEngine({ source: await zipOf(files), recipe, outDir: path.join(base, 'plain'), cacheDir: null });
    expect(rerun.exitCode).toBe(1);
    expect(rerun.report.totals.cards).toBe(3);
    expect(rerun.report.cards).toEqual(plain.report.cards);
    expect(Object.keys(await cards(path.join(base, 'two')))).toEqual(['a.png', 'b.png', 'd.png']);
    expect(await cards(path.join(base, 'two'))).toEqual(await cards(path.join(base, 'plain')));
    for (const name of ['bundle.zip', 'cache-deck.pdf']) {
      expect(await readFile(path.join(base, 'two', name))).toEqual(await readFile(path.join(base, 'plain', name)));
    }
    // poppler's pdfinfo (Debian poppler-utils) as the outside check: one page per usable card.
    expect(spawnSync('pdfinfo', [path.join(base, 'two', 'cache-deck.pdf')], { encoding: 'utf8' }).stdout).toMatch(/Pages:\s+3\n/);
    expect(spawnSync('unzip', ['-t', path.join(base, 'two', 'bundle.zip')], { encoding: 'utf8' }).status).toBe(0);
    // Nothing else is left in the folder.
    expect((await readdir(path.join(base, 'two'))).sort()).toEqual(['bundle.zip', 'cache-deck.pdf', 'cards', 'report.csv', 'report.json']);
  });

  it('a rerun into the same folder writes over the earlier PDF and bundle: shorter or longer, the same bytes as a fresh folder', async () => {
    const base = await mkdtemp(path.join(tmpdir(), 'bw-cache-'));
    const out = path.join(base, 'out');
    const colors = ['#aa2233', '#2233aa', '#33aa22', '#777777'];
    const files = Object.fromEntries(await Promise.all(colors.map(async (c, i) => [`card-${i}.png`, await art(c)] as const)));
    const pdf = path.join(out, 'cache-deck.pdf');
    const bundle = path.join(out, 'bundle.zip');
    await runEngine({ source: await artSet(files), recipe, outDir: out, cacheDir: null });
    const first = { pdf: await stat(pdf), bundle: await stat(bundle) };

    // Fewer cards: both files written over in place (same inode), cut to the new length.
    const fewer = { 'card-0.png': files['card-0.png']!, 'card-2.png': files['card-2.png']! };
    const fewerSet = await artSet(fewer); // one folder for both runs: the report names it
    await runEngine({ source: fewerSet, recipe, outDir: out, cacheDir: null });
    await runEngine({ source: fewerSet, recipe, outDir: path.join(base, 'fresh-fewer'), cacheDir: null });
    expect((await stat(pdf)).ino).toBe(first.pdf.ino);
    expect((await stat(bundle)).ino).toBe(first.bundle.ino);
    expect((await stat(pdf)).size).toBeLessThan(first.pdf.size);
    for (const name of ['bundle.zip', 'cache-deck.pdf']) {
      expect(await readFile(path.join(out, name))).toEqual(await readFile(path.join(base, 'fresh-fewer', name)));
    }
    // qpdf (Debian package) and Info-ZIP unzip as outside checks of the shortened files.
    expect(spawnSync('qpdf', ['--check', pdf], { encoding: 'utf8' }).status).toBe(0);
    expect(spawnSync('unzip', ['-t', bundle], { encoding: 'utf8' }).status).toBe(0);
    expect((await readdir(out)).sort()).toEqual(['bundle.zip', 'cache-deck.pdf', 'cards', 'report.csv', 'report.json']);

    // Someone's hard link to the PDF (a copy they keep) is never written over: the PDF is replaced instead.
    await link(pdf, path.join(base, 'kept.pdf'));
    const kept = await readFile(path.join(base, 'kept.pdf'));
    const allSet = await artSet(files);
    await runEngine({ source: allSet, recipe, outDir: out, cacheDir: null });
    await runEngine({ source: allSet, recipe, outDir: path.join(base, 'fresh-all'), cacheDir: null });
    expect(await readFile(path.join(base, 'kept.pdf'))).toEqual(kept);
    expect((await stat(pdf)).ino).not.toBe(first.pdf.ino);
    for (const name of ['bundle.zip', 'cache-deck.pdf']) {
      expect(await readFile(path.join(out, name))).toEqual(await readFile(path.join(base, 'fresh-all', name)));
    }
  });

  it('remembers rejected art too', async () => {
    const base = await mkdtemp(path.join(tmpdir(), 'bw-cache-'));
    const cacheDir = path.join(base, 'cache');
    const set = await artSet({ 'a.png': await art('#445566'), 'broken.png': Buffer.from('not a picture') });
    const one = await runEngine({ source: set, recipe, outDir: path.join(base, 'one'), cacheDir });
    const two = await runEngine({ source: set, recipe, outDir: path.join(base, 'two'), cacheDir });
    expect(one.exitCode).toBe(1);
    expect(two.report.cards).toEqual(one.report.cards);
    expect(two.report.cards.find((c) => c.source === 'broken.png')?.state).toBe('skipped');
  });
});

describe('bundle zip writer', () => {
  it('writes a zip that unzip tests clean, with stored and deflated entries and the same bytes every time', async () => {
    const dir = await mkdtemp(path.join(tmpdir(), 'bw-zip-'));
    await mkdir(path.join(dir, 'cards'));
    const png = await art('#123456');
    await writeFile(path.join(dir, 'cards', 'kärt 1.png'), png);
    const text = 'source,state\n'.repeat(2000);
    await writeFile(path.join(dir, 'report.csv'), text);
    const entries = [
      { file: path.join(dir, 'cards', 'kärt 1.png'), name: 'cards/kärt 1.png', compress: false },
      { file: path.join(dir, 'report.csv'), name: 'report.csv', compress: true },
    ];
    const stamp = new Date(Date.UTC(2020, 0, 1));
    await writeZip(path.join(dir, 'one.zip'), entries, stamp);
    await writeZip(path.join(dir, 'two.zip'), entries, stamp);
    expect(await readFile(path.join(dir, 'one.zip'))).toEqual(await readFile(path.join(dir, 'two.zip')));

    // Info-ZIP's unzip (Debian package) as the outside check: CRCs, sizes, names, methods.
    const check = spawnSync('unzip', ['-t', path.join(dir, 'one.zip')], { encoding: 'utf8' });
    expect(check.status).toBe(0);
    expect(check.stdout).toContain('No errors detected');
    const listing = spawnSync('unzip', ['-Z', '-v', path.join(dir, 'one.zip')], { encoding: 'utf8' }).stdout;
    expect(listing).toMatch(/compression method:\s+none \(stored\)/);
    expect(listing).toMatch(/compression method:\s+deflated/);
    expect(listing).toContain('file last modified on (DOS date/time):          2020 Jan 1 00:00:00');
    expect(spawnSync('unzip', ['-p', path.join(dir, 'one.zip'), 'cards/kärt 1.png']).stdout).toEqual(png);
    expect(spawnSync('unzip', ['-p', path.join(dir, 'one.zip'), 'report.csv'], { encoding: 'utf8' }).stdout).toBe(text);
  });
});
