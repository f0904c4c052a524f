// Assembly: from rendered cards to the deck's outputs (singles, combined PDF, sheets, proof, report,
// bundle). The pg-boss assemble job and the CLI's runEngine both call assembleOutputs.
import { lstat, mkdir, open, readFile, rename, rm, stat, writeFile } from 'node:fs/promises';
import { availableParallelism } from 'node:os';
import path from 'node:path';
import { crc32 } from 'node:zlib';
import { planDeck, type DeckSlot, type ManifestRow } from '../../shared/deck.ts';
import { BleedwrightError } from '../../shared/errors.ts';
import type { Finding } from '../../shared/findings.ts';
import { FORMAT_EXT, folderOf, renderName, slugify, stemOf, uniqueNames } from '../../shared/naming.ts';
import { recipeGeometry, type Recipe } from '../../shared/recipe.ts';
import type { SkippedEntry } from './archive.ts';
import { encodeSingle, type CardInfo, type RejectedCard } from './conform.ts';
import { linkOrCopy } from './file-io.ts';
import { writeCombinedPdf, type PdfPage } from './pdf.ts';
import { markDuplicates } from './preflight.ts';
import { countFindings, writeReports, type ReportCard, type RunReport } from './report.ts';
import { CrcMirror, writeZip, ZipPlacer, ZipTee, type ZipPart } from './zip-writer.ts';
import { mapLimited } from '../../shared/map-limited.ts';

export type Progress = { phase: 'cards' | 'pdf' | 'sheets' | 'proof' | 'report' | 'bundle'; done: number; total: number; current?: string };

/** One conformed (or rejected) source image, as the render step leaves it for assembly. */
export type RenderedCard = {
  source: string;
  role: 'front' | 'back';
  title: string | null;
  /** The conformed PNG on disk (8-bit RGB with bleed), or null when the card was rejected. */
  pngPath: string | null;
  info: CardInfo | RejectedCard['info'];
  /** CRC-32 of the file at pngPath when known (the render cache keeps it): the bundle then need not hash it. */
  pngCrc32?: number | null;
};

/** Resolves `name` inside `dir` and refuses anything that would land outside it. */
export function inside(dir: string, name: string): string {
  const full = path.resolve(dir, name);
  const rel = path.relative(path.resolve(dir), full);
  if (rel === '' || rel.startsWith('..') || path.isAbsolute(rel)) {
    throw new BleedwrightError('OUTPUT_PATH', `"${name}" would be written outside the output folder`);
  }
  return full;
}

export async function writeAtomic(target: string, data: Buffer | string): Promise<void> {
  await writeFile(`${target}.tmp`, data);
  await rename(`${target}.tmp`, target);
}

function errorText(findings: readonly Finding[]): string | null {
  const errors = findings.filter((f) => f.severity === 'error');
  return errors.length ? errors.map((f) => `${f.code}: ${f.message}`).join(' ') : null;
}

function reportCardOf(card: RenderedCard, outputs: string[], copies: number): ReportCard {
  const info = card.info;
  const full = 'sha256' in info ? info : null;
  return {
    source: card.source,
    role: card.role,
    title: card.title,
    state: card.pngPath ? 'done' : 'skipped',
    skippedBecause: card.pngPath ? null : errorText(info.findings),
    outputs,
    copies,
    sourcePx: info.sourcePx,
    format: info.format,
    effectiveDpi: full?.effectiveDpi ?? null,
    turn: full?.turn ?? null,
    fill: full?.fill ?? null,
    sourceKind: full?.sourceKind ?? null,
    sha256: full?.sha256 ?? null,
    findings: info.findings,
  };
}

// Singles made at once: hard links are a few file system calls; JPEG/WebP/TIFF singles are encoded.
const LINKS_AT_ONCE = 16;
const ENCODES_AT_ONCE = Math.min(4, availableParallelism());

const RESERVED_PDF_NAMES = new Set(['proof', 'sheets-letter', 'sheets-a4', 'report', 'bundle']);

/**
 * A bundle entry kept as a file of its own (a render or an output of outDir), for composeZip: with
 * `bundle: 'parts'` no bundle.zip is written, and a download streams these files as the zip.
 */
export type BundlePart = ZipPart<string>;

/** Deck, singles, combined PDF, sheets, proof, report and bundle from rendered cards. */
export async function assembleOutputs(opts: {
  recipe: Recipe;
  outDir: string;
  source: string;
  cards: readonly RenderedCard[];
  manifest: readonly ManifestRow[] | null;
  skippedFiles: readonly SkippedEntry[];
  onProgress?: (p: Progress) => void;
  /**
   * 'file' (default, the CLI): outDir/bundle.zip is written. 'parts' (runs on the server): the bundle's
   * entries are returned instead (each single as the render it links to), so storage holds no second
   * copy of every card and of the PDF; a download composes the zip (composeZip). Singles other than
   * PNG are files of outDir alone, so with them the bundle is still written as a file.
   */
  bundle?: 'file' | 'parts';
}): Promise<{ report: RunReport; bundleParts: BundlePart[] | null }> {
  const { recipe, outDir, cards, onProgress } = opts;
  const geo = recipeGeometry(recipe);
  const composing = opts.bundle === 'parts' && (!recipe.outputs.singles || recipe.outputs.singles === 'png');
  const bySource = new Map(cards.map((c) => [c.source, c]));
  const usable = (src: string | null) => (src && bySource.get(src)?.pngPath ? src : null);

  markDuplicates(cards.map((c) => ({ path: c.source, sha256: 'sha256' in c.info ? c.info.sha256 : null, findings: c.info.findings })));

  const fronts = cards.filter((c) => c.role === 'front' && c.pngPath).map((c) => c.source);
  const commonBack = usable(recipe.back.art);
  const manifest = (opts.manifest ?? []).map((r) => ({ ...r, back: usable(r.back) }));
  const plan = planDeck({ cards: fronts, recipe: { ...recipe, back: { ...recipe.back, art: commonBack } }, manifest });

  // Singles: one file per copy of every front, and one per distinct back, named by the template.
  const outputsBySource = new Map<string, string[]>();
  const slug = slugify(recipe.name);
  const pdfFile = `${RESERVED_PDF_NAMES.has(slug) ? `${slug}-deck` : slug}.pdf`;
  // The last run's PDF and bundle leave their names first: written over by this run's (see retireOutput),
  // or removed while the singles are linked (a rename over a large file whose pages are cached frees
  // them inside the rename, about 0.4 ms a MB, at the very end of a run).
  const retired = await Promise.all([retireOutput(inside(outDir, 'bundle.zip'), !composing), retireOutput(inside(outDir, pdfFile), recipe.outputs.pdf && fronts.length > 0)]);
  const clearing = Promise.all(retired.map((r) => r.removed));
  clearing.catch(() => undefined);
  const cardsDir = inside(outDir, 'cards');
  await rm(cardsDir, { recursive: true, force: true });
  if (recipe.outputs.singles) {
    const ext = FORMAT_EXT[recipe.outputs.singles];
    const wanted: Array<{ slot: DeckSlot; name: string }> = [];
    const backsNamed = new Set<string>();
    for (const slot of plan.slots) {
      if (!slot.source || slot.padding) continue;
      if (slot.kind === 'back') {
        if (backsNamed.has(slot.source)) continue;
        backsNamed.add(slot.source);
      }
      const tokens = { name: stemOf(slot.source), seq: slot.seq, copy: slot.copy, folder: folderOf(slot.source), ext };
      wanted.push({ slot, name: renderName(recipe.naming, tokens) });
    }
    // A common back the deck does not place (placement "none") still gets its single: printers that
    // take one back file for the whole deck ask for it separately.
    if (commonBack && !backsNamed.has(commonBack)) {
      const slot: DeckSlot = { seq: plan.slots.length + 1, kind: 'back', source: commonBack, copy: 0, padding: false };
      wanted.push({ slot, name: renderName(recipe.naming, { name: stemOf(commonBack), seq: slot.seq, copy: 0, folder: folderOf(commonBack), ext }) });
    }
    const names = uniqueNames(wanted.map((w) => w.name));
    await mkdir(cardsDir, { recursive: true });
    const singlesFormat = recipe.outputs.singles;
    // Links go several at once (a few file system calls each); encoded singles as many as renders.
    await mapLimited(wanted, singlesFormat === 'png' ? LINKS_AT_ONCE : ENCODES_AT_ONCE, async ({ slot }, i) => {
      const src = bySource.get(slot.source!)!;
      const target = inside(cardsDir, names[i]!);
      if (singlesFormat === 'png') {
        // A PNG single is the rendered PNG byte for byte: link it instead of copying ~1 MB per card.
        // (Renders of the CLI's cache are read-only files, so their linked singles are too: see keepRender.)
        await linkOrCopy(src.pngPath!, target);
      } else {
        await writeAtomic(target, await encodeSingle(await readFile(src.pngPath!), singlesFormat, recipe.dpi));
      }
    });
    wanted.forEach(({ slot }, i) => outputsBySource.set(slot.source!, [...(outputsBySource.get(slot.source!) ?? []), `cards/${names[i]}`]));
  }

  const pngOf = (src: string | null) => (src ? (bySource.get(src)?.pngPath ?? null) : null);
  const title = recipe.name;
  const singles = [...outputsBySource.values()].flat();
  const pdfName = recipe.outputs.pdf && fronts.length > 0 ? pdfFile : null;
  const sheetsName = recipe.outputs.sheets && plan.faces > 0 ? `sheets-${recipe.outputs.sheets.paper}.pdf` : null;
  const proofName = recipe.outputs.proof && cards.some((c) => c.pngPath) ? 'proof.pdf' : null;
  const pages = pdfName ? plan.slots.length : 0;

  // The combined PDF, the bundle, and then sheets, proof and report run at once: the first two are
  // mostly waiting on the disk. The bundle copies the singles while the PDF is written, and the PDF's
  // bytes go into the bundle as they are written (a ZipTee), so the PDF is never read back.
  // The PDF writer reads every card PNG whole; a PNG single's bundle entry is written from that read
  // (a ZipPlacer) instead of reading the file again.
  const tee = pdfName && !composing ? new ZipTee() : null;
  // A composed bundle needs the PDF's CRC-32: taken as it is written, so the PDF is not read back either.
  const pdfCrc = pdfName && composing ? new CrcMirror() : null;
  let pdfTask: Promise<unknown> = Promise.resolve();
  let placer: ZipPlacer | null = null;
  if (pdfName) {
    onProgress?.({ phase: 'pdf', done: 0, total: 1 });
    const pdfPages: PdfPage[] = plan.slots.map((s) => (s.source ? { kind: 'card', pngPath: pngOf(s.source)! } : { kind: 'blank' }));
    // Singles are hard links or copies of the renders: the bundle's entry of a single is keyed by the render it came from.
    const singleOf = new Map<string, string[]>();
    const crcOf = new Map<string, number>();
    if (recipe.outputs.singles === 'png' && !composing) {
      for (const [source, outs] of outputsBySource) {
        const card = bySource.get(source)!;
        singleOf.set(card.pngPath!, outs.map((o) => inside(outDir, o)));
        if (typeof card.pngCrc32 === 'number') crcOf.set(card.pngPath!, card.pngCrc32);
      }
    }
    let settlePdf!: (p: Promise<unknown>) => void;
    const p = singleOf.size ? new ZipPlacer(new Promise<unknown>((resolve) => (settlePdf = resolve))) : null;
    placer = p;
    pdfTask = writeCombinedPdf({
      pages: pdfPages,
      pagePt: geo.pagePt,
      bleedPt: geo.bleedPt,
      title,
      outPath: inside(outDir, pdfName),
      mirror: tee ?? pdfCrc,
      renameAfter: clearing,
      onPngFile: p ? async (png, file) => void (await Promise.all((singleOf.get(png) ?? []).map((single) => p.put(single, file, crcOf.get(png))))) : null,
    }).then(() => onProgress?.({ phase: 'pdf', done: 1, total: 1 }));
    if (p) settlePdf(pdfTask);
  }
  const restTask = (async (): Promise<RunReport> => {
    let sheetCount = 0;
    if (sheetsName) {
      onProgress?.({ phase: 'sheets', done: 0, total: 1 });
      // Faces in deck order with the back each one needs; common backs placed first/last are not faces.
      const faceFronts: Array<string | null> = [];
      const faceBacks: Array<string | null> = [];
      const interleaved = recipe.back.placement === 'interleaved';
      for (let i = 0; i < plan.slots.length; i++) {
        const slot = plan.slots[i]!;
        const isCommonBack = !interleaved && slot.kind === 'back' && !slot.padding && slot.copy === 0;
        if (isCommonBack) continue;
        faceFronts.push(pngOf(slot.source));
        if (interleaved) {
          faceBacks.push(pngOf(plan.slots[i + 1]?.source ?? null));
          i++;
        } else {
          faceBacks.push(pngOf(commonBack));
        }
      }
      // Sheets and proof load the PDF library only when a recipe asks for them (it takes a while to load).
      const { writeImposedSheets } = await import('./sheets.ts');
      const written = await writeImposedSheets({
        fronts: faceFronts,
        backs: faceBacks,
        paper: recipe.outputs.sheets!.paper,
        marks: recipe.outputs.sheets!.marks,
        trimIn: geo.trimIn,
        bleedIn: geo.bleedIn,
        title,
        outPath: inside(outDir, sheetsName),
      });
      sheetCount = written.sheets;
      onProgress?.({ phase: 'sheets', done: 1, total: 1 });
    }

    // Copies of each card in the deck, counted in one pass over the slots (not one pass per card).
    const copiesOf = new Map<string, number>();
    for (const s of plan.slots) if (s.source && !s.padding) copiesOf.set(`${s.kind}:${s.source}`, (copiesOf.get(`${s.kind}:${s.source}`) ?? 0) + 1);
    const reportCards = cards.map((c) => reportCardOf(c, outputsBySource.get(c.source) ?? [], copiesOf.get(`${c.role}:${c.source}`) ?? 0));

    if (proofName) {
      onProgress?.({ phase: 'proof', done: 0, total: 1 });
      const { writeProof } = await import('./proof.ts');
      await writeProof({
        cards: reportCards
          .filter((c) => c.state === 'done')
          .map((c) => ({
            pngPath: pngOf(c.source)!,
            name: c.outputs[0]?.replace(/^cards\//, '') ?? c.source,
            findings: c.findings.map((f) => ({ code: f.code, severity: f.severity })),
          })),
        trimIn: geo.trimIn,
        bleedIn: geo.bleedIn,
        safeIn: geo.safeIn,
        title,
        outPath: inside(outDir, proofName),
      });
      onProgress?.({ phase: 'proof', done: 1, total: 1 });
    }

    const report: RunReport = {
      recipe,
      source: path.basename(opts.source),
      geometry: { pagePx: geo.pagePx, trimPx: geo.trimPx, dpi: geo.dpi, pagePt: geo.pagePt, trimBoxPt: geo.trimBoxPt, bleedPt: geo.bleedPt },
      cards: reportCards,
      skippedFiles: [...opts.skippedFiles],
      outputs: { singles: singles.length, pdf: pdfName, sheets: sheetsName, proof: proofName, bundle: 'bundle.zip' },
      totals: {
        cards: reportCards.filter((c) => c.role === 'front' && c.state === 'done').length,
        cardsSkipped: reportCards.filter((c) => c.state === 'skipped').length,
        faces: plan.faces,
        pages,
        paddingAdded: plan.paddingAdded,
        sheets: sheetCount,
        findingsByCode: countFindings(reportCards),
      },
    };
    onProgress?.({ phase: 'report', done: 0, total: 1 });
    await writeReports(report, inside(outDir, 'report.json'), inside(outDir, 'report.csv'));
    return report;
  })();

  onProgress?.({ phase: 'bundle', done: 0, total: 1 });
  const later = [sheetsName, proofName, 'report.json', 'report.csv'].filter((n): n is string => n !== null);
  const entries = [...singles, ...(pdfName ? [pdfName] : []), ...later];
  if (composing) {
    const [pdfDone, rest] = await Promise.allSettled([pdfTask, restTask]);
    for (const r of [pdfDone, rest]) if (r.status === 'rejected') throw r.reason;
    const sourceOf = new Map<string, RenderedCard>();
    for (const [source, outs] of outputsBySource) for (const o of outs) sourceOf.set(o, bySource.get(source)!);
    const bundleParts = await mapLimited(entries, LINKS_AT_ONCE, async (name): Promise<BundlePart> => {
      const card = sourceOf.get(name);
      if (card) return { name, source: card.pngPath!, size: (await stat(card.pngPath!)).size, crc: card.pngCrc32 ?? (await fileCrc32(card.pngPath!)) };
      const file = inside(outDir, name);
      const size = (await stat(file)).size;
      if (name === pdfName && pdfCrc!.size === size) return { name, source: file, size, crc: pdfCrc!.crc };
      return { name, source: file, size, crc: await fileCrc32(file) };
    });
    onProgress?.({ phase: 'bundle', done: 1, total: 1 });
    return { report: (rest as PromiseFulfilledResult<RunReport>).value, bundleParts };
  }
  const bundleTask = writeBundle(
    outDir,
    entries,
    Object.fromEntries([...(pdfName ? [[pdfName, pdfTask]] : []), ...later.map((n) => [n, restTask])]),
    tee && pdfName ? { [pdfName]: tee } : {},
    placer,
    clearing,
  );
  // Every task is finished before this returns or throws: none is left writing into a folder the
  // caller may be about to clean up.
  const [pdfDone, rest, bundle] = await Promise.allSettled([pdfTask, restTask, bundleTask]);
  for (const r of [pdfDone, rest, bundle]) if (r.status === 'rejected') throw r.reason;
  onProgress?.({ phase: 'bundle', done: 1, total: 1 });
  return { report: (rest as PromiseFulfilledResult<RunReport>).value, bundleParts: null };
}

/** CRC-32 of a file, read in pieces (sheets and proofs can be large). */
async function fileCrc32(file: string): Promise<number> {
  const fh = await open(file, 'r');
  try {
    const buf = Buffer.allocUnsafe(4 * 1024 * 1024);
    let crc = 0;
    for (let at = 0; ; ) {
      const { bytesRead } = await fh.read(buf, 0, buf.length, at);
      if (bytesRead === 0) return crc;
      crc = crc32(buf.subarray(0, bytesRead), crc);
      at += bytesRead;
    }
  } finally {
    await fh.close();
  }
}

/**
 * Takes the last run's output `file` off its name. When this run writes the same output and the file is
 * its own (a regular file with one link: nobody else's copy), it becomes the writer's temp file, which
 * the writer then writes over (FileSink.create) and renames into place when done; otherwise it is
 * removed. Settles once the name is free; `removed` settles when a removal still going on is done (an
 * object, not a bare promise, so the caller need not wait for it: an async function would adopt it).
 */
async function retireOutput(file: string, reuse: boolean): Promise<{ removed: Promise<void> }> {
  try {
    const info = await lstat(file);
    if (reuse && info.isFile() && info.nlink === 1) {
      await rename(file, `${file}.tmp`);
      return { removed: Promise.resolve() };
    }
  } catch (err) {
    if ((err as NodeJS.ErrnoException).code === 'ENOENT') return { removed: Promise.resolve() };
    throw err;
  }
  const removed = rm(file, { force: true });
  removed.catch(() => undefined);
  return { removed };
}

// A fixed time stamp for every bundle entry, so the same outputs always make the same zip bytes.
export const BUNDLE_MTIME = new Date(Date.UTC(2020, 0, 1));

/**
 * Zips the listed files (paths relative to outDir) into outDir/bundle.zip. `pending` maps a file still
 * being written to the promise of its completion; the bundle waits for it when it reaches that entry.
 * `tees` maps a file to the ZipTee its writer also writes to (at most one; see ZipTee); `placer` puts
 * stored files' data from Buffers another writer holds (see ZipPlacer); `renameAfter` settles once
 * bundle.zip may be replaced.
 */
export async function writeBundle(
  outDir: string,
  files: readonly string[],
  pending: Readonly<Record<string, Promise<unknown>>> = {},
  tees: Readonly<Record<string, ZipTee>> = {},
  placer: ZipPlacer | null = null,
  renameAfter?: Promise<unknown>,
): Promise<void> {
  const target = inside(outDir, 'bundle.zip');
  try {
    const entries = files.map((rel) => ({ file: inside(outDir, rel), name: rel, compress: !/\.(png|jpe?g|pdf)$/i.test(rel), ready: pending[rel], tee: tees[rel] }));
    await writeZip(`${target}.tmp`, entries, BUNDLE_MTIME, placer);
  } catch (err) {
    // A writer waiting to learn where its tee goes must not wait for ever.
    for (const tee of Object.values(tees)) tee.drop();
    placer?.drop();
    await rm(`${target}.tmp`, { force: true });
    throw err;
  }
  await renameAfter;
  await rename(`${target}.tmp`, target);
}
