import { rename, rm, stat } from 'node:fs/promises';
import { ReusedReader, type ByteMirror } from './file-io.ts';
import { readPngForPdf } from './png-chunks.ts';
import { PdfEngineError } from './pdf-errors.ts';
import { PdfStreamWriter, pdfNum, pdfTextString } from './pdf-writer.ts';

export type PdfPage = { kind: 'card'; pngPath: string } | { kind: 'blank' };

// Card images read ahead of the writes (each holds one card PNG, ~1 MB, in memory).
const IMAGES_IN_FLIGHT = 3;

/**
 * Writes the combined print PDF: one card per page, in the order given.
 *
 * `pagePt` is the whole page, trim + 2 x bleed, in points (1/72 in, ISO 32000-1 8.3.2); MediaBox =
 * BleedBox = the page and TrimBox is inset by `bleedPt` (14.11.2). Each card PNG (8-bit RGB, with its
 * bleed, as the conform step writes it) fills the page. Its IDAT data is copied into the PDF unchanged
 * as a FlateDecode image with PNG predictors, so pixels are lossless and nothing is re-encoded.
 *
 * Memory stays bounded: objects stream to `outPath + '.tmp'` as they are made (IMAGES_IN_FLIGHT card
 * images in memory at a time, each read into a buffer reused for the cards after it), and the file is
 * renamed into place at the end. An image used on several pages (copies, a repeated back) is stored
 * once. Output bytes depend only on the inputs (no dates, the file ID is a hash of the content), so a
 * retry writes the same file.
 */
export async function writeCombinedPdf(opts: {
  pages: PdfPage[];
  pagePt: { w: number; h: number };
  bleedPt: number;
  title: string;
  outPath: string;
  /** Also receives the PDF's bytes as they are written (the bundle's copy of it, see ZipTee). */
  mirror?: ByteMirror | null;
  /**
   * Called with each card PNG's whole file as it is read (once per distinct file), while its image is
   * written: the bundle puts its singles' data from it (ZipPlacer). The Buffer is valid until this settles.
   */
  onPngFile?: ((pngPath: string, file: Buffer) => Promise<void>) | null;
  /** Settles once the file at outPath may be replaced (the caller is removing the old one). */
  renameAfter?: Promise<unknown>;
}): Promise<{ pages: number; bytes: number }> {
  const { pages, pagePt, bleedPt, title, outPath } = opts;
  if (pages.length === 0) throw new PdfEngineError('PDF_NO_PAGES', 'there are no cards to put in the PDF.');
  if (!(pagePt.w > 0 && pagePt.h > 0 && bleedPt >= 0 && 2 * bleedPt < pagePt.w && 2 * bleedPt < pagePt.h)) {
    throw new PdfEngineError(
      'PDF_PAGE_GEOMETRY',
      `a ${pagePt.w} x ${pagePt.h} pt page cannot hold a ${bleedPt} pt bleed on each side.`,
    );
  }

  const tmpPath = `${outPath}.tmp`;
  const writer = new PdfStreamWriter(tmpPath, opts.mirror ?? null);
  // A few card images in flight: the next one is read and checked while the last ones are still being
  // written (to the PDF, its bundle tee and the bundle's singles). Each reader's one buffer serves every
  // image it reads (see ReusedReader): no fresh memory per page. Offsets are fixed as writes are started,
  // so the file's bytes are the same as with one image at a time.
  const readers = Array.from({ length: IMAGES_IN_FLIGHT }, () => ({ reader: new ReusedReader(), busy: Promise.resolve() as Promise<unknown> }));
  try {
    await writer.start();
    const catalogNum = writer.allocate();
    const pagesNum = writer.allocate();
    const infoNum = writer.allocate();

    const mediaBox = `[0 0 ${pdfNum(pagePt.w)} ${pdfNum(pagePt.h)}]`;
    const trimBox = `[${pdfNum(bleedPt)} ${pdfNum(bleedPt)} ${pdfNum(pagePt.w - bleedPt)} ${pdfNum(pagePt.h - bleedPt)}]`;
    const boxes = `/MediaBox ${mediaBox} /BleedBox ${mediaBox} /TrimBox ${trimBox}`;

    // Every card page draws its own /Card image over the whole page, so one content stream serves all.
    let cardContentNum = 0;
    let blankContentNum = 0;
    // Only object numbers are kept per distinct image; the image bytes are released once written.
    const imageNums = new Map<string, number>();
    const pageNums: number[] = [];
    let next = 0;

    for (const page of pages) {
      const pageNum = writer.allocate();
      if (page.kind === 'blank') {
        if (!blankContentNum) {
          blankContentNum = writer.allocate();
          await writer.writeStream(blankContentNum, '', []);
        }
        await writer.writeObject(
          pageNum,
          `<< /Type /Page /Parent ${pagesNum} 0 R ${boxes} /Resources << >> /Contents ${blankContentNum} 0 R >>`,
        );
      } else {
        let imageNum = imageNums.get(page.pngPath);
        if (imageNum === undefined) {
          const slot = readers[next++ % readers.length]!;
          await slot.busy; // its buffer is free once the image read into it last is written
          const png = await readPngForPdf(page.pngPath, slot.reader);
          imageNum = writer.allocate();
          const placing = opts.onPngFile?.(page.pngPath, png.file);
          const writing = writer.writeStream(
            imageNum,
            `/Type /XObject /Subtype /Image /Width ${png.width} /Height ${png.height} /ColorSpace /DeviceRGB ` +
              `/BitsPerComponent 8 /Filter /FlateDecode ` +
              `/DecodeParms << /Predictor 15 /Colors 3 /BitsPerComponent 8 /Columns ${png.width} >>`,
            png.idat,
            `png ${png.width}x${png.height} ${png.idatBytes} ${png.idatCrcs.join(',')}`,
            png.idatDataCrcs,
          );
          slot.busy = Promise.all([writing, placing]);
          slot.busy.catch(() => undefined); // awaited below; a failure must not go unhandled meanwhile
          imageNums.set(page.pngPath, imageNum);
        }
        if (!cardContentNum) {
          cardContentNum = writer.allocate();
          // An image is drawn in a unit square; scale it to the full page, bleed included.
          await writer.writeStream(cardContentNum, '', [
            Buffer.from(`q ${pdfNum(pagePt.w)} 0 0 ${pdfNum(pagePt.h)} 0 0 cm /Card Do Q`, 'latin1'),
          ]);
        }
        await writer.writeObject(
          pageNum,
          `<< /Type /Page /Parent ${pagesNum} 0 R ${boxes} ` +
            `/Resources << /XObject << /Card ${imageNum} 0 R >> >> /Contents ${cardContentNum} 0 R >>`,
        );
      }
      pageNums.push(pageNum);
    }
    await Promise.all(readers.map((r) => r.busy));

    await writer.writeObject(
      pagesNum,
      `<< /Type /Pages /Count ${pageNums.length} /Kids [${pageNums.map((n) => `${n} 0 R`).join(' ')}] >>`,
    );
    await writer.writeObject(catalogNum, `<< /Type /Catalog /Pages ${pagesNum} 0 R >>`);
    await writer.writeObject(infoNum, `<< /Title ${pdfTextString(title)} /Producer (Bleedwright) >>`);
    await writer.finish(catalogNum, infoNum);
  } catch (err) {
    await Promise.allSettled(readers.map((r) => r.busy));
    await writer.abort();
    await rm(tmpPath, { force: true });
    throw err;
  }
  await opts.renameAfter;
  await rename(tmpPath, outPath);
  const { size } = await stat(outPath);
  return { pages: pages.length, bytes: size };
}
