// `npm run bench`: Bleedwright's engine (A) against a hand-written ImageMagick + img2pdf pipeline (B)
// and a bare sharp script (C), on the same generated art, in one run. See README.md "Benchmark".
//   npm run bench                      200 and 1,000 cards (several minutes on 2 cores)
//   npm run bench -- --cards 200       one size
//   npm run bench -- --quick           40 cards, to try it fast
import { execFileSync, spawnSync } from 'node:child_process';
import { existsSync } from 'node:fs';
import { link, mkdir, readdir, readFile, rm, stat, writeFile } from 'node:fs/promises';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { writeCombinedPdf } from '../jobs/engine/pdf.ts';
import { exampleRecipe, type RecipeInput } from '../shared/recipe.ts';
import { cardName, cardPng, ensureArt, ensureZip } from './art.ts';
import { GNU_TIME, measure, type Measured } from './measure.ts';
import { workersBench, type WorkersBench, type WorkersResult } from './workers.ts';

const ROOT = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const WORK = path.join(ROOT, 'bench', 'work');
const RESULTS = path.join(ROOT, 'bench', 'results');
const CONVERT = '/usr/bin/convert';
const MB = 1024 * 1024;
const RERUN_CHANGED = 5;

const TARGETS = {
  aFasterThanB: 4,
  aOverCMax: 1.5,
  singlesOverBMax: 1.1,
  pdfMsPerPageMax: 5,
  pdfOverSinglesMax: 0.02,
  peakBytesMax: 600 * MB,
  scale1000Over200Max: 5.5,
  rerunShareMax: 0.1,
};

// The recipe A runs: poker with 1/8 in bleed at 300 DPI, frame colour carried into the bleed, landscape
// art turned, singles and the combined PDF (the steps B and C do too), no sheets or proof.
const RECIPE: RecipeInput = {
  ...exampleRecipe(),
  name: 'Bench deck',
  naming: '{name}.png',
  sheet: { multiple: 18, pad: 'none' },
  outputs: { singles: 'png', pdf: true, sheets: null, proof: false },
};

// B: what a power user writes with general-purpose tools (2 conversions at a time).
const PIPELINE_B = [
  'set -eu',
  'mkdir -p "$OUT/cards"',
  'cd "$IN"',
  `ls *.png | xargs -P 2 -I{} ${CONVERT} {} -rotate "90>" -background black -gravity center -extent 825x1125 -units PixelsPerInch -density 300 "$OUT/cards/{}"`,
  'img2pdf --output "$OUT/deck.pdf" "$OUT"/cards/*.png',
].join('\n');

const PIPELINE_C = ['set -eu', 'node --import tsx bench/floor.ts "$IN" "$OUT/cards" "$COUNT"', 'img2pdf --output "$OUT/deck.pdf" "$OUT"/cards/*.png'].join('\n');

type Args = { counts: number[]; workers: boolean; comparisons: boolean };

function parseArgs(argv: string[]): Args {
  let counts = [200, 1000];
  let workers = true;
  let comparisons = true;
  for (let i = 0; i < argv.length; i++) {
    const a = argv[i]!;
    if (a === '--quick') counts = [40];
    else if (a === '--cards') counts = (argv[++i] ?? '').split(',').map(Number);
    else if (a === '--no-workers') workers = false;
    // Only Bleedwright's own sides (A and A-workers): for scale and memory runs when time is short.
    else if (a === '--engine-only') comparisons = false;
    else fail(`unknown option ${a}; use --cards N[,N], --quick, --no-workers or --engine-only`);
  }
  if (counts.some((n) => !Number.isInteger(n) || n < RERUN_CHANGED * 2 || n > 5000)) fail(`--cards takes whole numbers from ${RERUN_CHANGED * 2} to 5000`);
  return { counts: [...new Set(counts)].sort((a, b) => a - b), workers, comparisons };
}

function fail(message: string): never {
  process.stderr.write(`bench: ${message}\n`);
  process.exit(2);
}

/** B and C need ImageMagick 6 (the real one), img2pdf and GNU time; say what to install if not. */
function checkTools(): void {
  const missing: string[] = [];
  const im = spawnSync(CONVERT, ['-version'], { encoding: 'utf8' });
  if (im.status !== 0 || !/ImageMagick/.test(im.stdout)) missing.push(`${CONVERT} (ImageMagick: apt-get install imagemagick)`);
  if (spawnSync('img2pdf', ['--version'], { encoding: 'utf8' }).status !== 0) missing.push('img2pdf (apt-get install img2pdf)');
  if (!existsSync(GNU_TIME)) missing.push(`${GNU_TIME} (GNU time: apt-get install time)`);
  if (missing.length) fail(`missing tools for the comparison runs: ${missing.join(', ')}`);
}

async function filesBytes(dir: string): Promise<{ count: number; bytes: number; files: string[] }> {
  const names = (await readdir(dir)).filter((n) => n.endsWith('.png')).sort();
  let bytes = 0;
  for (const n of names) bytes += (await stat(path.join(dir, n))).size;
  return { count: names.length, bytes, files: names.map((n) => path.join(dir, n)) };
}

/** A folder holding the first n cards (hard links, no copies) and a stored zip of them. */
async function artSetOf(all: readonly string[], n: number): Promise<{ dir: string; zip: string }> {
  const dir = path.join(WORK, `art-${n}`);
  await mkdir(dir, { recursive: true });
  const have = new Set(await readdir(dir));
  for (const f of all.slice(0, n)) if (!have.has(path.basename(f))) await link(f, path.join(dir, path.basename(f)));
  const zip = path.join(WORK, `art-${n}.zip`);
  await ensureZip(zip, all.slice(0, n));
  return { dir, zip };
}

/** The same set with RERUN_CHANGED cards' art replaced (an art fix), as a zip. */
async function changedSetOf(all: readonly string[], n: number): Promise<string> {
  const dir = path.join(WORK, `art-${n}-fixed`);
  await rm(dir, { recursive: true, force: true });
  await mkdir(dir, { recursive: true });
  const changed = new Set(Array.from({ length: RERUN_CHANGED }, (_, k) => Math.floor(((k + 0.5) * n) / RERUN_CHANGED)));
  for (let i = 0; i < n; i++) {
    const target = path.join(dir, cardName(i));
    // The fixed art is another generated card of the same orientation (index + 10,000): new bytes.
    if (changed.has(i)) {
      const fixed = await cardPng(i + 10_000);
      if (fixed.equals(await readFile(all[i]!))) fail(`the fixed art for card ${i + 1} has the same bytes as the original`);
      await writeFile(target, fixed);
    } else await link(all[i]!, target);
  }
  const zip = path.join(WORK, `art-${n}-fixed.zip`);
  await rm(zip, { force: true });
  await ensureZip(zip, (await readdir(dir)).sort().map((f) => path.join(dir, f)));
  return zip;
}

type SideResult = {
  wallMs: number;
  msPerCard: number;
  cpuMsPerCard: number;
  singlesBytesPerCard: number;
  pdfBytes: number;
  peakMB: number;
  peakProcessMB: number;
};

function sideOf(m: Measured, n: number, singles: { bytes: number }, pdfBytes: number): SideResult {
  return {
    wallMs: Math.round(m.wallMs),
    msPerCard: round(m.wallMs / n, 1),
    cpuMsPerCard: round(m.cpuMs / n, 1),
    singlesBytesPerCard: Math.round(singles.bytes / n),
    pdfBytes,
    peakMB: round(m.peakTreeRssBytes / MB, 0),
    peakProcessMB: round(m.peakProcessRssBytes / MB, 0),
  };
}

function round(x: number, digits: number): number {
  const f = 10 ** digits;
  return Math.round(x * f) / f;
}

function mustSucceed(m: Measured, what: string): void {
  if (m.status !== 0) fail(`${what} failed (exit ${m.status}): ${(m.stderr || m.stdout).trim().split('\n').slice(-3).join(' | ')}`);
}

/**
 * Flushes what earlier steps left in the page cache (untimed), so no side pays for the disk catching
 * up with the side before it: each starts with the same clean cache of dirty pages.
 */
function settleDisk(): void {
  spawnSync('sync');
}

function log(line: string): void {
  process.stdout.write(`${line}\n`);
}

async function runSize(all: readonly string[], n: number, recipePath: string, doRerun: boolean, workers: WorkersBench | null, comparisons: boolean) {
  const { dir, zip } = await artSetOf(all, n);
  const out = (name: string) => path.join(WORK, `out-${n}-${name}`);
  const cacheDir = path.join(WORK, `cache-${n}`);
  for (const name of ['a', 'b', 'c']) await rm(out(name), { recursive: true, force: true });
  await rm(cacheDir, { recursive: true, force: true });
  const env = { ...process.env, BLEEDWRIGHT_CACHE_DIR: cacheDir };

  log(`\n${n} cards`);
  log('  A  bleedwright run (CLI) ...');
  settleDisk();
  // The script itself, as `npx bleedwright` runs it: its shebang sets the malloc settings (scripts/malloc-env.mjs).
  const a = await measure('bin/bleedwright.js', ['run', zip, '--recipe', recipePath, '--out', out('a'), '--timings'], { cwd: ROOT, env });
  mustSucceed(a, 'A (bleedwright run)');
  const aSingles = await filesBytes(path.join(out('a'), 'cards'));
  const report = JSON.parse(await readFile(path.join(out('a'), 'report.json'), 'utf8'));
  const aPdf = path.join(out('a'), report.outputs.pdf);
  const aPdfBytes = (await stat(aPdf)).size;
  const qpdf = spawnSync('qpdf', ['--check', aPdf], { encoding: 'utf8' });

  // PDF assembly on its own, on A's singles: the engine's writer, timed in this process. A's own
  // gigabytes still waiting in the page cache are flushed first (sync), so the time is the assembly's
  // and not the disk catching up with the run before it.
  settleDisk();
  const pdfCpu = process.cpuUsage();
  const pdfStart = performance.now();
  const assembled = await writeCombinedPdf({
    pages: aSingles.files.map((pngPath) => ({ kind: 'card' as const, pngPath })),
    pagePt: { w: 198, h: 270 },
    bleedPt: 9,
    title: 'Bench deck',
    outPath: path.join(WORK, `assembly-${n}.pdf`),
  });
  const pdfMsPerPage = (performance.now() - pdfStart) / assembled.pages;
  const pdfCpuUsed = process.cpuUsage(pdfCpu);
  const pdfCpuMsPerPage = (pdfCpuUsed.user + pdfCpuUsed.system) / 1000 / assembled.pages;
  await rm(path.join(WORK, `assembly-${n}.pdf`), { force: true });

  let b: Measured | null = null;
  let c: Measured | null = null;
  if (comparisons) {
    log('  B  ImageMagick convert x2 + img2pdf ...');
    settleDisk();
    b = await measure('bash', ['-c', PIPELINE_B], { cwd: ROOT, env: { ...process.env, IN: dir, OUT: out('b') } });
    mustSucceed(b, 'B (ImageMagick pipeline)');
    log('  C  bare sharp x2 + img2pdf ...');
    settleDisk();
    c = await measure('bash', ['-c', PIPELINE_C], { cwd: ROOT, env: { ...process.env, IN: dir, OUT: out('c'), COUNT: String(n) } });
    mustSucceed(c, 'C (sharp floor)');
  }
  const bSide = b ? sideOf(b, n, await filesBytes(path.join(out('b'), 'cards')), (await statSize(path.join(out('b'), 'deck.pdf'))) ?? 0) : null;
  const cSide = c ? sideOf(c, n, await filesBytes(path.join(out('c'), 'cards')), (await statSize(path.join(out('c'), 'deck.pdf'))) ?? 0) : null;

  let rerun: { wallMs: number; share: number; cpuMs: number; cpuShare: number; changed: number; rendered: number; steps: Steps | null } | null = null;
  const fixedZip = doRerun ? await changedSetOf(all, n) : null;
  if (fixedZip) {
    log(`  A  rerun with ${RERUN_CHANGED} of ${n} cards changed ...`);
    const rendersBefore = await countRenders(cacheDir);
    settleDisk();
    const r = await measure('bin/bleedwright.js', ['run', fixedZip, '--recipe', recipePath, '--out', out('a'), '--timings'], { cwd: ROOT, env });
    mustSucceed(r, 'A rerun');
    // The rerun must have rendered exactly the changed cards (each new render adds one file to the cache).
    const rendered = (await countRenders(cacheDir)) - rendersBefore;
    if (rendered !== RERUN_CHANGED) fail(`the rerun rendered ${rendered} cards, not the ${RERUN_CHANGED} changed ones`);
    rerun = { wallMs: Math.round(r.wallMs), share: round(r.wallMs / a.wallMs, 3), cpuMs: r.cpuMs, cpuShare: round(r.cpuMs / a.cpuMs, 3), changed: RERUN_CHANGED, rendered, steps: stepsOf(r) };
  }

  let aWorkers: (WorkersResult & { msPerCard: number; cpuMsPerCard: number; peakMB: number; overB: number | null; overC: number | null; rerunShare: number | null }) | null = null;
  if (workers) {
    log(`  A  a run on the workers${fixedZip ? ', then a rerun with 5 cards changed' : ''} ...`);
    settleDisk();
    const w = await workers.run(zip, RECIPE as never, `${n}`, fixedZip);
    if (w.state !== 'done') fail(`A-workers: the run ended ${w.state}`);
    if (w.rerun && w.rerun.state !== 'done') fail(`A-workers: the rerun ended ${w.rerun.state}`);
    if (w.rerun && w.rerun.cached !== n - RERUN_CHANGED) fail(`A-workers: the rerun took ${w.rerun.cached} cards from the cache, not ${n - RERUN_CHANGED}`);
    aWorkers = {
      ...w,
      msPerCard: round(w.wallMs / n, 1),
      cpuMsPerCard: round(w.cpuMs / n, 1),
      peakMB: round(w.peakBytes / MB, 0),
      overB: b ? round(w.wallMs / b.wallMs, 3) : null,
      overC: c ? round(w.wallMs / c.wallMs, 3) : null,
      rerunShare: w.rerun ? round(w.rerun.wallMs / w.wallMs, 3) : null,
    };
  }

  for (const name of ['b', 'c']) await rm(out(name), { recursive: true, force: true });
  return {
    cards: n,
    A: { ...sideOf(a, n, aSingles, aPdfBytes), steps: stepsOf(a), pdfMsPerPage: round(pdfMsPerPage, 2), pdfCpuMsPerPage: round(pdfCpuMsPerPage, 2), pdfOverSingles: round(aPdfBytes / aSingles.bytes - 1, 4), qpdfCheck: qpdf.status === 0 },
    B: bSide,
    C: cSide,
    ratios: b && c ? { aOverB: round(a.wallMs / b.wallMs, 3), aOverC: round(a.wallMs / c.wallMs, 3), aCpuOverBCpu: round(a.cpuMs / b.cpuMs, 3), aCpuOverCCpu: round(a.cpuMs / c.cpuMs, 3) } : null,
    rerun,
    workers: aWorkers,
  };
}

/** Where a CLI run's time went: the `timings:` line `bleedwright run --timings` prints on stderr. */
type Steps = { startMs: number; artSetMs: number; cardsMs: number; assemblyMs: number };
function stepsOf(m: Measured): Steps | null {
  const t = /timings: start (\d+) ms, art set (\d+) ms, cards (\d+) ms, assembly (\d+) ms/.exec(m.stderr);
  return t ? { startMs: Number(t[1]), artSetMs: Number(t[2]), cardsMs: Number(t[3]), assemblyMs: Number(t[4]) } : null;
}

async function countRenders(cacheDir: string): Promise<number> {
  return (await readdir(cacheDir)).filter((f) => f.endsWith('.json')).length;
}

async function statSize(p: string): Promise<number | null> {
  try {
    return (await stat(p)).size;
  } catch {
    return null;
  }
}

type SizeResult = Awaited<ReturnType<typeof runSize>>;
type Check = { target: string; value: string; limit: string; met: boolean; missedBy: string | null };

function checks(sizes: SizeResult[], workers: string): Check[] {
  const out: Check[] = [];
  const add = (target: string, value: number, limit: number, higherIsBetter: boolean, fmt: (x: number) => string) => {
    const met = higherIsBetter ? value >= limit : value <= limit;
    const missedBy = met ? null : higherIsBetter ? `${round((limit / value - 1) * 100, 1)}% short` : `${round((value / limit - 1) * 100, 1)}% over`;
    out.push({ target, value: fmt(value), limit: fmt(limit), met, missedBy });
  };
  const x = (v: number) => `${round(v, 2)}x`;
  for (const s of sizes) {
    const n = s.cards;
    if (s.ratios && s.B) {
      add(`${n}: A at least 4x faster than B (B/A)`, 1 / s.ratios.aOverB, TARGETS.aFasterThanB, true, x);
      add(`${n}: A no more than 1.5x C (A/C)`, s.ratios.aOverC, TARGETS.aOverCMax, false, x);
      // The same two on CPU time, which a busy machine stretches far less than wall time.
      add(`${n}: on CPU time, A at least 4x less than B (B/A)`, 1 / s.ratios.aCpuOverBCpu, TARGETS.aFasterThanB, true, x);
      add(`${n}: on CPU time, A no more than 1.5x C (A/C)`, s.ratios.aCpuOverCCpu, TARGETS.aOverCMax, false, x);
      add(`${n}: singles no bigger than B's (A/B bytes)`, s.A.singlesBytesPerCard / s.B.singlesBytesPerCard, TARGETS.singlesOverBMax, false, x);
    }
    add(`${n}: PDF assembly per page`, s.A.pdfMsPerPage, TARGETS.pdfMsPerPageMax, false, (v) => `${round(v, 2)} ms`);
    add(`${n}: PDF size over the sum of singles`, Math.abs(s.A.pdfOverSingles), TARGETS.pdfOverSinglesMax, false, (v) => `${round(v * 100, 2)}%`);
    if (s.rerun) {
      add(`${n}: rerun with ${s.rerun.changed} cards changed, share of the full run`, s.rerun.share, TARGETS.rerunShareMax, false, (v) => `${round(v * 100, 1)}%`);
      add(`${n}: rerun with ${s.rerun.changed} cards changed, share of the full run's CPU time`, s.rerun.cpuShare, TARGETS.rerunShareMax, false, (v) => `${round(v * 100, 1)}%`);
    }
    if (s.workers) {
      if (s.workers.overB !== null) add(`${n}: A-workers at least 4x faster than B (B/A)`, 1 / s.workers.overB, TARGETS.aFasterThanB, true, x);
      if (s.workers.overC !== null) add(`${n}: A-workers no more than 1.5x C (A/C)`, s.workers.overC, TARGETS.aOverCMax, false, x);
      if (s.workers.rerunShare !== null) add(`${n}: A-workers rerun with ${RERUN_CHANGED} cards changed, share of the full run`, s.workers.rerunShare, TARGETS.rerunShareMax, false, (v) => `${round(v * 100, 1)}%`);
    }
  }
  const big = sizes.find((s) => s.cards === 1000);
  if (big) add('1000: peak memory of A', big.A.peakMB * MB, TARGETS.peakBytesMax, false, (v) => `${round(v / MB, 0)} MB`);
  if (big?.workers) add('1000: peak memory of the worker (A-workers)', big.workers.peakMB * MB, TARGETS.peakBytesMax, false, (v) => `${round(v / MB, 0)} MB`);
  const small = sizes.find((s) => s.cards === 200);
  if (big && small) {
    add('1000 cards over 200 cards, A wall time', big.A.wallMs / small.A.wallMs, TARGETS.scale1000Over200Max, false, x);
    add('1000 cards over 200 cards, A CPU time', (big.A.cpuMsPerCard * big.cards) / (small.A.cpuMsPerCard * small.cards), TARGETS.scale1000Over200Max, false, x);
  }
  if (workers !== 'measured') out.push({ target: 'A via a real run on the workers', value: workers, limit: '-', met: false, missedBy: workers });
  return out;
}

function printTable(sizes: SizeResult[], results: Check[]): void {
  const rows: string[][] = [['cards', 'side', 'ms/card', 'CPU ms/card', 'MB/card', 'PDF MB', 'peak MB', 'A/side']];
  for (const s of sizes) {
    for (const side of ['A', 'B', 'C'] as const) {
      const r = s[side];
      if (!r) continue;
      const ratio = side === 'A' || !s.ratios ? '1' : String(round(side === 'B' ? s.ratios.aOverB : s.ratios.aOverC, 2));
      rows.push([String(s.cards), side, String(r.msPerCard), String(r.cpuMsPerCard), String(round(r.singlesBytesPerCard / 1e6, 3)), String(round(r.pdfBytes / 1e6, 1)), String(r.peakMB), ratio]);
    }
    if (s.workers) {
      const w = s.workers;
      rows.push([String(s.cards), 'A workers', String(w.msPerCard), String(w.cpuMsPerCard), '', '', String(w.peakMB), w.overB === null || w.overC === null ? '' : `B ${round(w.overB, 2)} C ${round(w.overC, 2)}`]);
      if (w.rerun) {
        rows.push([String(s.cards), 'A workers rerun', `${w.rerun.wallMs} ms`, '', '', `${w.rerun.cached} cached`, '', `${round((w.rerunShare ?? 0) * 100, 1)}% of full`]);
        // Not part of the run: the composed bundle is streamed from storage when someone downloads it.
        rows.push([String(s.cards), 'A bundle download', `${w.rerun.bundleDownload.ms} ms`, '', '', `${round(w.rerun.bundleDownload.bytes / 1e6, 1)} MB`, '', 'at download']);
      }
    }
    rows.push([String(s.cards), 'A pdf', `${s.A.pdfMsPerPage} ms/page`, `${s.A.pdfCpuMsPerPage} ms/page`, '', `${round(s.A.pdfOverSingles * 100, 2)}% over singles`, '', s.A.qpdfCheck ? 'qpdf ok' : 'qpdf FAILED']);
    if (s.rerun) rows.push([String(s.cards), 'A rerun', `${s.rerun.wallMs} ms`, '', '', '', '', `${round(s.rerun.share * 100, 1)}% of full`]);
  }
  const widths = rows[0]!.map((_, i) => Math.max(...rows.map((r) => r[i]!.length)));
  log('');
  for (const r of rows) log(r.map((cell, i) => cell.padEnd(widths[i]!)).join('  '));
  const stepsLine = (st: Steps | null) => (st ? `start ${st.startMs} ms, art set ${st.artSetMs} ms, cards ${st.cardsMs} ms, assembly ${st.assemblyMs} ms` : 'not printed');
  for (const s of sizes) {
    log(`\n${s.cards}: A's steps: ${stepsLine(s.A.steps)}`);
    if (s.rerun) log(`${s.cards}: A rerun's steps: ${stepsLine(s.rerun.steps)}`);
  }
  log('\nTargets');
  for (const c of results) log(`  ${c.met ? 'met   ' : 'MISSED'}  ${c.target}: ${c.value} (limit ${c.limit})${c.missedBy ? `, ${c.missedBy}` : ''}`);
}

async function main(): Promise<void> {
  const args = parseArgs(process.argv.slice(2));
  checkTools();
  await mkdir(WORK, { recursive: true });
  await mkdir(RESULTS, { recursive: true });
  const max = Math.max(...args.counts);
  log(`Bleedwright bench: ${args.counts.join(' and ')} cards; ${os.cpus().length} cores, load ${os.loadavg()[0]!.toFixed(1)}`);
  let lastShown = 0;
  const all = await ensureArt(path.join(WORK, 'art'), max, (done) => {
    if (done === max || done - lastShown >= 100) {
      process.stdout.write(`  art ${done}/${max}\r`);
      lastShown = done;
    }
  });
  log('');
  const recipePath = path.join(WORK, 'recipe.json');
  await writeFile(recipePath, `${JSON.stringify(RECIPE, null, 2)}\n`);

  // A-workers needs the runs backend (pg-boss run-plan, run-render, run-assemble) committed on main.
  const landed = spawnSync('git', ['cat-file', '-e', 'HEAD:jobs/runs/jobs.ts'], { cwd: ROOT }).status === 0;
  let workers = 'measured';
  let bench: WorkersBench | null = null;
  if (!args.workers) workers = 'not measured: --no-workers';
  else if (!landed) workers = 'not measured: the runs backend (jobs/runs/) has not landed on main yet';
  else {
    log('Starting the bench database for A-workers (each run starts its own worker) ...');
    bench = workersBench(ROOT, path.join(WORK, 'workers'));
    await bench.start();
  }

  const sizes: SizeResult[] = [];
  const rerunAt = args.counts.includes(200) ? 200 : args.comparisons ? args.counts[0]! : -1;
  const file = args.counts.join(',') === '200,1000' && args.comparisons && args.workers ? 'latest.json' : `cards-${args.counts.join('-')}${args.comparisons ? '' : '-engine'}.json`;
  const commit = execFileSync('git', ['rev-parse', '--short', 'HEAD'], { cwd: ROOT, encoding: 'utf8' }).trim();
  const loadAtStart = round(os.loadavg()[0]!, 2);
  // Written after every size, so a long run that is stopped still leaves what it measured.
  const save = async (complete: boolean) => {
    const json = {
      when: new Date().toISOString(),
      commit,
      complete,
      machine: { cores: os.cpus().length, cpu: os.cpus()[0]?.model ?? null, memoryMB: Math.round(os.totalmem() / MB), loadAtStart, loadAtEnd: round(os.loadavg()[0]!, 2) },
      recipe: RECIPE,
      pipelines: { B: PIPELINE_B, C: PIPELINE_C },
      targets: TARGETS,
      sizes,
      workers,
      checks: checks(sizes, workers),
    };
    await writeFile(path.join(RESULTS, file), `${JSON.stringify(json, null, 2)}\n`);
  };
  try {
    for (const n of args.counts) {
      sizes.push(await runSize(all, n, recipePath, n === rerunAt, bench, args.comparisons));
      await save(false);
    }
  } finally {
    await bench?.stop();
  }
  printTable(sizes, checks(sizes, workers));
  log(`  (load average now ${os.loadavg()[0]!.toFixed(1)} on ${os.cpus().length} cores; wall times stretch with load, CPU times much less)`);
  await save(true);
  log(`\nWrote bench/results/${file}`);
}

await main();
