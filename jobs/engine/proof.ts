import { rename, rm, writeFile } from 'node:fs/promises';
import { PDFDocument, StandardFonts, rgb, type PDFFont, type PDFImage, type PDFPage, type RGB } from 'pdf-lib';
import sharp from 'sharp';
import { PdfEngineError } from './pdf-errors.ts';
import { breakChars, fitText, wrapText } from './pdf-text.ts';

type Severity = 'info' | 'warn' | 'error';

export type ProofCard = {
  pngPath: string;
  name: string;
  findings: Array<{ code: string; severity: Severity }>;
};

// Letter portrait (ANSI/ASME Y14.1): the proof is for review on screen or a quick print.
const PAGE = { w: 612, h: 792 };
const MARGIN = 36;
const HEADER_H = 78;
const THUMB_W = 100;
const GAP = 16;
const NAME_SIZE = 8;
const CODE_SIZE = 7;
const NAME_LINES = 2;
const CODE_LINES = 3;
const TEXT_H = 4 + NAME_LINES * NAME_SIZE * 1.3 + CODE_LINES * CODE_SIZE * 1.3;
// Thumbnails at about 150 DPI of their printed size: sharp enough to review, small enough for a 1,000-card deck.
const THUMB_DPI = 150;

const TRIM_COLOUR = rgb(0.85, 0, 0.55);
const SAFE_COLOUR = rgb(0, 0.55, 0.85);
const SEVERITY: Record<Severity, { rank: number; colour: RGB; letter: string }> = {
  info: { rank: 1, colour: rgb(0.2, 0.45, 0.85), letter: 'i' },
  warn: { rank: 2, colour: rgb(0.95, 0.55, 0.05), letter: '!' },
  error: { rank: 3, colour: rgb(0.85, 0.1, 0.1), letter: 'X' },
};

/** Grid of the proof pages for a card of the given page (trim + bleed) proportions. */
export function proofLayout(opts: { trimIn: { w: number; h: number }; bleedIn: number }) {
  const pageWIn = opts.trimIn.w + 2 * opts.bleedIn;
  const pageHIn = opts.trimIn.h + 2 * opts.bleedIn;
  const thumbW = THUMB_W;
  const thumbH = (THUMB_W * pageHIn) / pageWIn;
  const cellW = thumbW + GAP;
  const cellH = thumbH + TEXT_H + GAP;
  const cols = Math.max(1, Math.floor((PAGE.w - 2 * MARGIN + GAP) / cellW));
  const rows = Math.max(1, Math.floor((PAGE.h - 2 * MARGIN - HEADER_H + GAP) / cellH));
  return { pageW: PAGE.w, pageH: PAGE.h, thumbW, thumbH, cellW, cellH, cols, rows, perPage: cols * rows };
}

/**
 * Writes the proof contact sheet: every card as a thumbnail with its output name, the trim line and
 * the safe line drawn over it, a badge coloured by its worst finding and the finding codes listed,
 * under a header with the title, card count and page geometry.
 */
export async function writeProof(opts: {
  cards: ProofCard[];
  trimIn: { w: number; h: number };
  bleedIn: number;
  safeIn: number;
  title: string;
  outPath: string;
}): Promise<{ pages: number }> {
  const { cards, trimIn, bleedIn, safeIn } = opts;
  const layout = proofLayout({ trimIn, bleedIn });
  if (!(trimIn.w > 0 && trimIn.h > 0 && bleedIn >= 0 && safeIn >= 0)) {
    throw new PdfEngineError('PROOF_GEOMETRY', `the trim ${trimIn.w} x ${trimIn.h} in with ${bleedIn} in bleed is not a usable card size.`);
  }
  const doc = await PDFDocument.create({ updateMetadata: false });
  doc.setTitle(opts.title);
  doc.setProducer('Bleedwright');
  const font = await doc.embedFont(StandardFonts.Helvetica);
  const bold = await doc.embedFont(StandardFonts.HelveticaBold);

  const pageCount = Math.max(1, Math.ceil(cards.length / layout.perPage));
  const thumbs = new Map<string, PDFImage>();
  const thumbPx = Math.round((layout.thumbW / 72) * THUMB_DPI);
  // Scale from inches on the card to points on the thumbnail.
  const s = layout.thumbW / (trimIn.w + 2 * bleedIn);

  for (let p = 0; p < pageCount; p++) {
    const page = doc.addPage([layout.pageW, layout.pageH]);
    drawHeader(page, { ...opts, font, bold, pageNo: p + 1, pageCount });
    const top = layout.pageH - MARGIN - HEADER_H;
    for (let i = 0; i < layout.perPage; i++) {
      const card = cards[p * layout.perPage + i];
      if (!card) break;
      const col = i % layout.cols;
      const row = Math.floor(i / layout.cols);
      const x = MARGIN + col * layout.cellW;
      const y = top - row * layout.cellH - layout.thumbH;

      let thumb = thumbs.get(card.pngPath);
      if (!thumb) {
        let jpeg: Buffer;
        try {
          jpeg = await sharp(card.pngPath).resize({ width: thumbPx }).flatten({ background: '#ffffff' }).jpeg({ quality: 80 }).toBuffer();
        } catch (err) {
          throw new PdfEngineError('PROOF_IMAGE_UNREADABLE', `card image for "${card.name}" could not be read for the proof (${(err as Error).message}).`);
        }
        thumb = await doc.embedJpg(jpeg);
        thumbs.set(card.pngPath, thumb);
      }
      page.drawImage(thumb, { x, y, width: layout.thumbW, height: layout.thumbH });
      const trimInset = bleedIn * s;
      page.drawRectangle({
        x: x + trimInset, y: y + trimInset, width: layout.thumbW - 2 * trimInset, height: layout.thumbH - 2 * trimInset,
        borderColor: TRIM_COLOUR, borderWidth: 0.75,
      });
      const safeInset = (bleedIn + safeIn) * s;
      if (layout.thumbW > 2 * safeInset && layout.thumbH > 2 * safeInset) {
        page.drawRectangle({
          x: x + safeInset, y: y + safeInset, width: layout.thumbW - 2 * safeInset, height: layout.thumbH - 2 * safeInset,
          borderColor: SAFE_COLOUR, borderWidth: 0.75, borderDashArray: [3, 2],
        });
      }

      const worst = card.findings.reduce<Severity | null>(
        (w, f) => (w === null || SEVERITY[f.severity].rank > SEVERITY[w].rank ? f.severity : w),
        null,
      );
      if (worst) drawBadge(page, x + layout.thumbW - 9, y + layout.thumbH - 9, worst, bold);

      let ty = y - 4;
      for (const line of breakChars(card.name, bold, NAME_SIZE, layout.thumbW + GAP / 2, NAME_LINES)) {
        ty -= NAME_SIZE * 1.3;
        page.drawText(line, { x, y: ty, size: NAME_SIZE, font: bold });
      }
      const codes = [...new Set(card.findings.map((f) => f.code))].join(', ');
      const lines = wrapText(codes, font, CODE_SIZE, layout.thumbW + GAP / 2);
      const shown = lines.slice(0, CODE_LINES);
      if (lines.length > CODE_LINES) shown[CODE_LINES - 1] = fitText(`${shown[CODE_LINES - 1]} ${lines.slice(CODE_LINES).join(' ')}`, font, CODE_SIZE, layout.thumbW + GAP / 2);
      for (const line of shown) {
        ty -= CODE_SIZE * 1.3;
        page.drawText(line, { x, y: ty, size: CODE_SIZE, font, color: worst ? SEVERITY[worst].colour : rgb(0.3, 0.3, 0.3) });
      }
    }
  }

  const tmpPath = `${opts.outPath}.tmp`;
  try {
    await writeFile(tmpPath, await doc.save({ useObjectStreams: false }));
    await rename(tmpPath, opts.outPath);
  } catch (err) {
    await rm(tmpPath, { force: true });
    throw err;
  }
  return { pages: pageCount };
}

function drawBadge(page: PDFPage, cx: number, cy: number, severity: Severity, bold: PDFFont): void {
  const { colour, letter } = SEVERITY[severity];
  page.drawCircle({ x: cx, y: cy, size: 6.5, color: colour, borderColor: rgb(1, 1, 1), borderWidth: 1 });
  const size = 8;
  page.drawText(letter, { x: cx - bold.widthOfTextAtSize(letter, size) / 2, y: cy - size * 0.35, size, font: bold, color: rgb(1, 1, 1) });
}

function drawHeader(
  page: PDFPage,
  ctx: { title: string; cards: ProofCard[]; trimIn: { w: number; h: number }; bleedIn: number; safeIn: number; font: PDFFont; bold: PDFFont; pageNo: number; pageCount: number },
): void {
  const { font, bold, trimIn, bleedIn, safeIn } = ctx;
  const width = PAGE.w - 2 * MARGIN;
  const inches = (n: number) => `${Number(n.toFixed(3))} in`;
  const mm = (n: number) => `${Number((n * 25.4).toFixed(2))} mm`;
  let y = PAGE.h - MARGIN - 14;
  page.drawText(fitText(`Proof: ${ctx.title}`, bold, 14, width - 80), { x: MARGIN, y, size: 14, font: bold });
  const pageLabel = `page ${ctx.pageNo} of ${ctx.pageCount}`;
  page.drawText(pageLabel, { x: PAGE.w - MARGIN - font.widthOfTextAtSize(pageLabel, 9), y, size: 9, font });
  const pageW = trimIn.w + 2 * bleedIn;
  const pageH = trimIn.h + 2 * bleedIn;
  const withFindings = ctx.cards.filter((c) => c.findings.length > 0).length;
  const lines = [
    `${ctx.cards.length} card${ctx.cards.length === 1 ? '' : 's'}, ${withFindings} with findings. ` +
      `Trim ${inches(trimIn.w)} x ${inches(trimIn.h)} (${mm(trimIn.w)} x ${mm(trimIn.h)}), bleed ${inches(bleedIn)}, safe margin ${inches(safeIn)}.`,
    `Page with bleed ${inches(pageW)} x ${inches(pageH)} = ${Number((pageW * 72).toFixed(2))} x ${Number((pageH * 72).toFixed(2))} pt.`,
  ];
  for (const line of lines.flatMap((l) => wrapText(l, font, 9, width))) {
    y -= 12;
    page.drawText(line, { x: MARGIN, y, size: 9, font });
  }

  // Legend: what each line and badge colour means.
  y -= 16;
  let x = MARGIN;
  page.drawLine({ start: { x, y: y + 3 }, end: { x: x + 18, y: y + 3 }, thickness: 1, color: TRIM_COLOUR });
  x += 22;
  const trimLabel = 'trim line (where the card is cut)';
  page.drawText(trimLabel, { x, y, size: 8, font });
  x += font.widthOfTextAtSize(trimLabel, 8) + 14;
  page.drawLine({ start: { x, y: y + 3 }, end: { x: x + 18, y: y + 3 }, thickness: 1, color: SAFE_COLOUR, dashArray: [3, 2] });
  x += 22;
  const safeLabel = 'safe line (keep text and key art inside)';
  page.drawText(safeLabel, { x, y, size: 8, font });
  x += font.widthOfTextAtSize(safeLabel, 8) + 14;
  for (const severity of ['error', 'warn', 'info'] as const) {
    drawBadge(page, x + 6, y + 3, severity, bold);
    x += 15;
    page.drawText(severity, { x, y, size: 8, font });
    x += font.widthOfTextAtSize(severity, 8) + 10;
  }
}
