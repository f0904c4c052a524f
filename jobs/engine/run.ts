// The engine without a database: a thin loop over reusable pieces. The pg-boss render job calls
// conformCard per card and the assemble job calls assembleOutputs; the CLI calls runEngine.
import { createHash, randomBytes } from 'node:crypto';
import { access, mkdir, readFile, rename, rm, writeFile } from 'node:fs/promises';
import { availableParallelism } from 'node:os';
import path from 'node:path';
import sharp from 'sharp';
import { crc32 } from 'node:zlib';
import { BleedwrightError } from '../../shared/errors.ts';
import type { Finding } from '../../shared/findings.ts';
import type { Recipe } from '../../shared/recipe.ts';
import { assembleOutputs, inside, writeAtomic, type Progress, type RenderedCard } from './assemble.ts';
import { entryFingerprint, imagePaths, openArtSet, readEntry, type ArchiveLimits, type ArtSet, type SkippedEntry } from './archive.ts';
import { conformCard } from './conform.ts';
import { markDuplicates } from './preflight.ts';
import { limiter, mapLimited } from '../../shared/map-limited.ts';
import type { RunReport } from './report.ts';

export { assembleOutputs, BUNDLE_MTIME, writeBundle, type BundlePart, type Progress, type RenderedCard } from './assemble.ts';
export { mapLimited } from '../../shared/map-limited.ts';

/**
 * Cards conformed at once: one more than the cores (at most 4 cores' worth, as each card holds its
 * decoded pixels in memory), or BLEEDWRIGHT_CARDS_IN_FLIGHT. Each card's libvips work runs on one thread
 * of the libuv pool, but its zip read, hashing and callbacks run on the single JavaScript thread; with
 * only one card per core, a core sits idle whenever two cards wait for that thread at the same time.
 */
export const CARDS_IN_FLIGHT = cardsInFlight(process.env);

function cardsInFlight(env: NodeJS.ProcessEnv): number {
  const set = Number(env.BLEEDWRIGHT_CARDS_IN_FLIGHT);
  return Number.isInteger(set) && set >= 1 ? set : Math.min(4, availableParallelism()) + 1;
}

// Render cache files read at once on a rerun (each is a small JSON file and a stat).
const CACHE_READS_AT_ONCE = 16;

export type RunResult = {
  report: RunReport;
  /** Wall time of each step, in ms: opening the art set, the cards (cache lookups and renders), assembly. */
  timings: { openMs: number; cardsMs: number; assemblyMs: number };
  /** 0 every card produced, 1 some cards skipped (the report says why). */
  exitCode: 0 | 1;
  outDir: string;
};

/** The sources to render: every front in the set and every back the recipe or manifest names. */
export function cardSources(set: Pick<ArtSet, 'entries' | 'manifest'>, recipe: Recipe): Array<{ source: string; role: 'front' | 'back'; title: string | null }> {
  const images = imagePaths(set);
  const known = new Set(images);
  const backs = new Set<string>();
  if (recipe.back.art) {
    if (!known.has(recipe.back.art)) throw new BleedwrightError('BACK_MISSING', `back.art "${recipe.back.art}" is not in the art set`);
    backs.add(recipe.back.art);
  }
  for (const row of set.manifest ?? []) if (row.back) backs.add(row.back);
  const titles = new Map((set.manifest ?? []).map((r) => [r.file, r.title]));
  return images.map((source) => ({ source, role: backs.has(source) ? ('back' as const) : ('front' as const), title: titles.get(source) ?? null }));
}

// Bump when conform makes different pixels, findings or info for the same input and recipe, so renders
// cached by an older engine are not reused (4: the pixel hash is over RGB, not RGBA, for opaque art;
// 5: cached PNGs are read-only files, see keepRender).
const RENDER_VERSION = 5;

/** Names the engine that makes a render (render version and libvips version): cache entries of another engine are not reused. */
export const ENGINE_TAG = createHash('sha256').update(JSON.stringify({ v: RENDER_VERSION, vips: sharp.versions.vips })).digest('hex').slice(0, 12);

/**
 * Cache key of one render: the source's fingerprint (entryFingerprint: CRC-32 and sizes, read from a
 * zip's directory without inflating anything), its name (turn rules and the extension check read it),
 * the recipe fields conform reads, the engine's render version and the image library's version.
 * A rerun thus finds its unchanged cards without reading their art; the CRC-32 + size + name match is
 * what zip tools trust too (a changed file keeping all three is a 1 in 2^32 accident).
 */
export function renderCacheKey(recipe: Recipe, source: string, fingerprint: string): string {
  const { trim, bleed, dpi, fit, fill, turn, turnRules } = recipe;
  const conformFields = { trim, bleed, dpi, source: recipe.source, fit, fill, turn, turnRules };
  return createHash('sha256')
    .update(JSON.stringify({ v: RENDER_VERSION, vips: sharp.versions.vips, source, fingerprint, recipe: conformFields }))
    .digest('hex');
}

/** `pngCrc32`: CRC-32 of the cached PNG file, so the bundle need not hash it again (absent in older entries). */
type CachedRender = { png: boolean; info: RenderedCard['info']; pngCrc32?: number };

async function readCached(cacheDir: string, key: string): Promise<CachedRender | null> {
  try {
    const cached = JSON.parse(await readFile(path.join(cacheDir, `${key}.json`), 'utf8')) as CachedRender;
    return typeof cached.png === 'boolean' && Array.isArray(cached.info?.findings) ? cached : null;
  } catch {
    return null;
  }
}

/** Writes under a name no other writer uses, then renames: concurrent runs sharing a cache never see half a file. */
async function writeShared(target: string, data: Buffer | string, mode = 0o644): Promise<void> {
  const tmp = `${target}.${process.pid}-${randomBytes(4).toString('hex')}.tmp`;
  await writeFile(tmp, data, { mode });
  await rename(tmp, target);
}

/**
 * Keeps a render in the cache. The PNG is a read-only file: a run's PNG singles are hard links to it
 * (assembleOutputs), and an edit saved in place over a single would otherwise change the cache. Made
 * read-only once here, not at every link (a rerun's 200 chmod calls).
 */
async function keepRender(cacheDir: string, key: string, png: Buffer): Promise<void> {
  await writeShared(path.join(cacheDir, `${key}.png`), png, 0o444);
}

/** One card of an art set to render: where its PNG goes, and the render cache to use, if any. */
type CardToRender = {
  set: ArtSet;
  source: string;
  role: 'front' | 'back';
  title: string | null;
  recipe: Recipe;
  pngPath: string | null;
  cacheDir?: string | null;
};

/**
 * Conforms one source image and writes its PNG to `pngPath` (temp name, then rename).
 *
 * With `cacheDir`, renders are kept there by `renderCacheKey` (source fingerprint and conform settings), and a
 * card rendered before is not conformed again: the returned `pngPath` is then the cached file (read it,
 * never change it) and `pngPath` is not written.
 */
export async function renderCard(opts: CardToRender): Promise<RenderedCard> {
  const key = await cacheKeyOf(opts);
  return (await findCachedRender(opts, key)) ?? (await conformAndKeep(opts, key));
}

/** The card's render cache key when there is a cache (a folder's file is read for its fingerprint: once). */
async function cacheKeyOf(opts: CardToRender): Promise<string | null> {
  return opts.cacheDir ? renderCacheKey(opts.recipe, opts.source, await entryFingerprint(opts.set, opts.source)) : null;
}

/** The card's render when `cacheDir` holds one under `key` (see renderCard), else null. Reads no art. */
async function findCachedRender(opts: CardToRender, key: string | null): Promise<RenderedCard | null> {
  const { source, role, title, pngPath, cacheDir } = opts;
  if (!cacheDir || !key) return null;
  const cached = await readCached(cacheDir, key);
  if (!cached) return null;
  if (!cached.png || pngPath === null) return { source, role, title, pngPath: null, info: cached.info };
  const cachedPng = path.join(cacheDir, `${key}.png`);
  if (!(await fileExists(cachedPng))) return null;
  return { source, role, title, pngPath: cachedPng, info: cached.info, pngCrc32: typeof cached.pngCrc32 === 'number' ? cached.pngCrc32 : null };
}

/** Conforms the card and, with `cacheDir`, keeps the render there under `key` (see renderCard). */
async function conformAndKeep(opts: CardToRender, key: string | null): Promise<RenderedCard> {
  const { set, source, role, title, recipe, pngPath, cacheDir } = opts;
  const result = await conformCard({ input: await readEntry(set, source), sourceName: source, recipe });
  const pngCrc32 = result.png ? crc32(result.png) : null;
  if (cacheDir && key) {
    if (result.png) await keepRender(cacheDir, key, result.png);
    const entry: CachedRender = { png: result.png !== null, info: result.info, ...(pngCrc32 !== null ? { pngCrc32 } : {}) };
    await writeShared(path.join(cacheDir, `${key}.json`), JSON.stringify(entry));
  }
  if (!result.png) return { source, role, title, pngPath: null, info: result.info };
  if (cacheDir && key && pngPath) return { source, role, title, pngPath: path.join(cacheDir, `${key}.png`), info: result.info, pngCrc32 };
  if (pngPath) await writeAtomic(pngPath, result.png);
  return { source, role, title, pngPath, info: result.info, pngCrc32 };
}

async function fileExists(p: string): Promise<boolean> {
  try {
    await access(p);
    return true;
  } catch {
    return false;
  }
}

/** Runs a whole art set through the engine into outDir. Unusable input throws a BleedwrightError. */
export async function runEngine(opts: {
  source: string;
  recipe: Recipe;
  outDir: string;
  limits?: Partial<ArchiveLimits>;
  onProgress?: (p: Progress) => void;
  /** Keep renders here and reuse them on reruns (see renderCard); default BLEEDWRIGHT_CACHE_DIR, else none. */
  cacheDir?: string | null;
}): Promise<RunResult> {
  const { recipe, onProgress } = opts;
  const cacheDir = opts.cacheDir === undefined ? process.env.BLEEDWRIGHT_CACHE_DIR || null : opts.cacheDir;
  if (cacheDir) await mkdir(cacheDir, { recursive: true });
  const started = performance.now();
  const set = await openArtSet(opts.source, opts.limits);
  const opened = performance.now();
  const sources = cardSources(set, recipe);
  const outDir = path.resolve(opts.outDir);
  await mkdir(outDir, { recursive: true });
  const workDir = inside(outDir, '.work');
  await rm(workDir, { recursive: true, force: true });
  await mkdir(workDir, { recursive: true });
  try {
    let done = 0;
    onProgress?.({ phase: 'cards', done, total: sources.length });
    const pngPathOf = (i: number) => inside(workDir, `${String(i).padStart(5, '0')}.png`);
    // Cards are looked up in the render cache several at once (a small file read each), and each one
    // missing joins the render queue at once: a rerun's few changed cards render side by side while the
    // lookups go on, not one at a time between cached ones.
    const renders = limiter(CARDS_IN_FLIGHT);
    const cards = await mapLimited(sources, CACHE_READS_AT_ONCE, async (s, i) => {
      const wanted: CardToRender = { set, ...s, recipe, pngPath: pngPathOf(i), cacheDir };
      const key = await cacheKeyOf(wanted);
      const card = (await findCachedRender(wanted, key)) ?? (await renders(() => conformAndKeep(wanted, key)));
      onProgress?.({ phase: 'cards', done: ++done, total: sources.length, current: s.source });
      return card;
    });
    const rendered = performance.now();
    const { report } = await assembleOutputs({
      recipe,
      outDir,
      source: opts.source,
      cards,
      manifest: set.manifest,
      skippedFiles: set.skipped,
      onProgress,
    });
    const ms = (from: number, to: number) => Math.round(to - from);
    const timings = { openMs: ms(started, opened), cardsMs: ms(opened, rendered), assemblyMs: ms(rendered, performance.now()) };
    return { report, exitCode: report.totals.cardsSkipped > 0 ? 1 : 0, outDir, timings };
  } finally {
    await rm(workDir, { recursive: true, force: true });
  }
}

export type CheckRow = { source: string; role: 'front' | 'back'; sourcePx: { w: number; h: number } | null; effectiveDpi: number | null; findings: Finding[] };

/** Preflight only: conforms every card in memory and returns the findings; writes nothing. */
export async function checkArtSet(opts: { source: string; recipe: Recipe; limits?: Partial<ArchiveLimits>; onProgress?: (p: Progress) => void }): Promise<{ rows: CheckRow[]; skippedFiles: SkippedEntry[]; exitCode: 0 | 1 }> {
  const set = await openArtSet(opts.source, opts.limits);
  const sources = cardSources(set, opts.recipe);
  let done = 0;
  const cards = await mapLimited(sources, CARDS_IN_FLIGHT, async (s) => {
    const card = await renderCard({ set, ...s, recipe: opts.recipe, pngPath: null });
    opts.onProgress?.({ phase: 'cards', done: ++done, total: sources.length, current: s.source });
    return card;
  });
  markDuplicates(cards.map((c) => ({ path: c.source, sha256: 'sha256' in c.info ? c.info.sha256 : null, findings: c.info.findings })));
  const rows = cards.map((c) => ({
    source: c.source,
    role: c.role,
    sourcePx: c.info.sourcePx,
    effectiveDpi: 'effectiveDpi' in c.info ? c.info.effectiveDpi : null,
    findings: c.info.findings,
  }));
  const failed = cards.some((c) => c.info.findings.some((f) => f.severity === 'error'));
  return { rows, skippedFiles: set.skipped, exitCode: failed ? 1 : 0 };
}

