import { rename, rm, writeFile } from 'node:fs/promises';
import {
  PDFDocument,
  StandardFonts,
  clip,
  concatTransformationMatrix,
  drawObject,
  endPath,
  popGraphicsState,
  pushGraphicsState,
  rectangle,
  rgb,
  type PDFFont,
  type PDFPage,
  type PDFRef,
} from 'pdf-lib';
import { embedPngPassThrough } from './pdf-embed.ts';
import { PdfEngineError } from './pdf-errors.ts';
import { wrapText } from './pdf-text.ts';

/** Paper sizes in points: Letter 8.5 x 11 in (ANSI/ASME Y14.1), A4 210 x 297 mm (ISO 216). */
export const PAPER_PT = {
  letter: { w: 612, h: 792 },
  a4: { w: 595.28, h: 841.89 },
} as const;

export type Paper = keyof typeof PAPER_PT;

/** A rectangle in PDF points, origin at the bottom-left of the page. */
export type Rect = { x: number; y: number; w: number; h: number };
export type Segment = { x1: number; y1: number; x2: number; y2: number };

export type SheetLayout = {
  pageW: number;
  pageH: number;
  orientation: 'portrait' | 'landscape';
  cols: number;
  rows: number;
  perSheet: number;
  /** Card (trim) rectangles on a front sheet, slot order: top row first, left to right. */
  cards: Rect[];
  /** Where slot i's back goes on the back sheet: same row, column mirrored for long-edge duplex. */
  backCards: Rect[];
  /** Crop marks: extensions of every card edge line, in the margin outside the card grid. */
  marks: Segment[];
};

// Smallest margin kept round the card grid: room for crop marks, and most home printers cannot
// print closer to the paper edge than about this (common practice, no source).
const MIN_MARGIN_PT = 12;
// Crop marks start this far from the grid, so a stroked mark never touches a card.
const MARK_GAP_PT = 3;
const MARK_MAX_LENGTH_PT = 18;
// Marks stop this far short of the paper edge.
const MARK_EDGE_CLEARANCE_PT = 3;
const MARK_MIN_LENGTH_PT = 4;
export const MARK_WIDTH_PT = 0.5;

/**
 * Lays out cards at trim size on one sheet: as many as fit, in whichever paper orientation holds more
 * (portrait on a tie), as a centred grid with no gutter. Cards abut, so cut lines are shared and the
 * crop marks sit only in the margin, extending each card edge line; none can enter a card.
 */
export function layoutSheet(opts: { paper: Paper; trimIn: { w: number; h: number }; marks: boolean }): SheetLayout {
  const paper = PAPER_PT[opts.paper];
  const cardW = opts.trimIn.w * 72;
  const cardH = opts.trimIn.h * 72;
  if (!(cardW > 0 && cardH > 0)) {
    throw new PdfEngineError('SHEET_TRIM_INVALID', `the trim size ${opts.trimIn.w} x ${opts.trimIn.h} in is not a usable card size.`);
  }
  const fit = (pageW: number, pageH: number) => {
    const cols = Math.floor((pageW - 2 * MIN_MARGIN_PT + 1e-6) / cardW);
    const rows = Math.floor((pageH - 2 * MIN_MARGIN_PT + 1e-6) / cardH);
    return { pageW, pageH, cols: Math.max(cols, 0), rows: Math.max(rows, 0) };
  };
  const portrait = fit(paper.w, paper.h);
  const landscape = fit(paper.h, paper.w);
  const useLandscape = landscape.cols * landscape.rows > portrait.cols * portrait.rows;
  const { pageW, pageH, cols, rows } = useLandscape ? landscape : portrait;
  if (cols * rows === 0) {
    throw new PdfEngineError(
      'SHEET_CARD_TOO_LARGE',
      `a ${opts.trimIn.w} x ${opts.trimIn.h} in card does not fit on ${opts.paper === 'a4' ? 'A4' : 'Letter'} paper with margins.`,
    );
  }

  const gridW = cols * cardW;
  const gridH = rows * cardH;
  const left = (pageW - gridW) / 2;
  const bottom = (pageH - gridH) / 2;
  const top = bottom + gridH;
  const right = left + gridW;
  const slot = (r: number, c: number): Rect => ({ x: left + c * cardW, y: top - (r + 1) * cardH, w: cardW, h: cardH });
  const cards: Rect[] = [];
  const backCards: Rect[] = [];
  for (let r = 0; r < rows; r++) {
    for (let c = 0; c < cols; c++) {
      cards.push(slot(r, c));
      backCards.push(slot(r, cols - 1 - c));
    }
  }

  const marks: Segment[] = [];
  if (opts.marks) {
    const vLength = Math.min(MARK_MAX_LENGTH_PT, bottom - MARK_GAP_PT - MARK_EDGE_CLEARANCE_PT);
    const hLength = Math.min(MARK_MAX_LENGTH_PT, left - MARK_GAP_PT - MARK_EDGE_CLEARANCE_PT);
    if (vLength >= MARK_MIN_LENGTH_PT) {
      for (let c = 0; c <= cols; c++) {
        const x = left + c * cardW;
        marks.push({ x1: x, y1: top + MARK_GAP_PT, x2: x, y2: top + MARK_GAP_PT + vLength });
        marks.push({ x1: x, y1: bottom - MARK_GAP_PT - vLength, x2: x, y2: bottom - MARK_GAP_PT });
      }
    }
    if (hLength >= MARK_MIN_LENGTH_PT) {
      for (let r = 0; r <= rows; r++) {
        const y = bottom + r * cardH;
        marks.push({ x1: left - MARK_GAP_PT - hLength, y1: y, x2: left - MARK_GAP_PT, y2: y });
        marks.push({ x1: right + MARK_GAP_PT, y1: y, x2: right + MARK_GAP_PT + hLength, y2: y });
      }
    }
  }
  return {
    pageW,
    pageH,
    orientation: useLandscape ? 'landscape' : 'portrait',
    cols,
    rows,
    perSheet: cols * rows,
    cards,
    backCards,
    marks,
  };
}

/**
 * Writes home-print sheets: an instructions page, then for each group of cards a front sheet and (when
 * any card has a back) its back sheet, mirrored left-right for long-edge duplex.
 *
 * Cards are drawn at trim size: each PNG (with bleed) is placed so its trim area lands on the card
 * rectangle and is clipped to it. Images go in with the PNG pass-through (`embedPngPassThrough`), once
 * per distinct file. Measured with 18 distinct 825 x 1125 poker cards: ~130 ms for the whole file this
 * way against ~1.8 s for pdf-lib's `embedPng` alone; and it is lossless, so no JPEG thumbnails are needed. pdf-lib keeps the document in memory until
 * `save()`; that is the distinct card images plus small page streams, far less than the combined PDF.
 */
export async function writeImposedSheets(opts: {
  fronts: Array<string | null>;
  backs: Array<string | null>;
  paper: 'letter' | 'a4';
  marks: boolean;
  trimIn: { w: number; h: number };
  bleedIn: number;
  title: string;
  outPath: string;
}): Promise<{ sheets: number; perSheet: number }> {
  const { fronts, backs, trimIn, bleedIn } = opts;
  if (fronts.length === 0) throw new PdfEngineError('SHEETS_NO_CARDS', 'there are no cards to put on home-print sheets.');
  const layout = layoutSheet({ paper: opts.paper, trimIn, marks: opts.marks });
  const hasBacks = backs.some((b) => b !== null);
  const sheets = Math.ceil(fronts.length / layout.perSheet);

  const doc = await PDFDocument.create({ updateMetadata: false });
  doc.setTitle(opts.title);
  doc.setProducer('Bleedwright');
  const font = await doc.embedFont(StandardFonts.Helvetica);
  const bold = await doc.embedFont(StandardFonts.HelveticaBold);

  drawInstructions(doc.addPage([layout.pageW, layout.pageH]), { ...opts, layout, sheets, hasBacks, font, bold });

  const images = new Map<string, PDFRef>();
  const imageRef = async (pngPath: string) => {
    let ref = images.get(pngPath);
    if (!ref) {
      ref = await embedPngPassThrough(doc, pngPath);
      images.set(pngPath, ref);
    }
    return ref;
  };
  const bleedPt = bleedIn * 72;
  const placeCard = async (page: PDFPage, pngPath: string, rect: Rect) => {
    const name = page.node.newXObject('Card', await imageRef(pngPath));
    page.pushOperators(
      pushGraphicsState(),
      rectangle(rect.x, rect.y, rect.w, rect.h),
      clip(),
      endPath(),
      // The image (unit square) is scaled to trim + 2 x bleed and shifted so the trim lands on `rect`.
      concatTransformationMatrix(rect.w + 2 * bleedPt, 0, 0, rect.h + 2 * bleedPt, rect.x - bleedPt, rect.y - bleedPt),
      drawObject(name),
      popGraphicsState(),
    );
  };

  for (let sheet = 0; sheet < sheets; sheet++) {
    const first = sheet * layout.perSheet;
    const front = doc.addPage([layout.pageW, layout.pageH]);
    for (let slot = 0; slot < layout.perSheet; slot++) {
      const pngPath = fronts[first + slot];
      if (pngPath) await placeCard(front, pngPath, layout.cards[slot]);
    }
    for (const m of layout.marks) {
      front.drawLine({ start: { x: m.x1, y: m.y1 }, end: { x: m.x2, y: m.y2 }, thickness: MARK_WIDTH_PT, color: rgb(0, 0, 0) });
    }
    if (!hasBacks) continue;
    // No crop marks on the back: duplex printing shifts the two sides a little, and a second set of
    // marks that does not line up only misleads whoever cuts.
    const back = doc.addPage([layout.pageW, layout.pageH]);
    for (let slot = 0; slot < layout.perSheet && first + slot < fronts.length; slot++) {
      const pngPath = backs[first + slot];
      if (pngPath) await placeCard(back, pngPath, layout.backCards[slot]);
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
  return { sheets, perSheet: layout.perSheet };
}

function drawInstructions(
  page: PDFPage,
  ctx: {
    title: string;
    paper: Paper;
    marks: boolean;
    trimIn: { w: number; h: number };
    layout: SheetLayout;
    sheets: number;
    hasBacks: boolean;
    font: PDFFont;
    bold: PDFFont;
  },
): void {
  const { layout, font, bold, trimIn } = ctx;
  const margin = 54;
  const width = layout.pageW - 2 * margin;
  let y = layout.pageH - margin;
  const inches = (n: number) => `${Number(n.toFixed(3))}`;
  const mm = (n: number) => `${Number((n * 25.4).toFixed(1))}`;
  const paperName = ctx.paper === 'a4' ? 'A4' : 'Letter';
  const flipEdge = layout.orientation === 'portrait' ? 'long edge' : 'short edge';

  const heading = (text: string, size: number) => {
    for (const line of wrapText(text, bold, size, width)) {
      y -= size * 1.3;
      page.drawText(line, { x: margin, y, size, font: bold });
    }
    y -= size * 0.4;
  };
  const paragraph = (text: string) => {
    const size = 11;
    for (const line of wrapText(text, font, size, width)) {
      y -= size * 1.35;
      page.drawText(line, { x: margin, y, size, font });
    }
    y -= 6;
  };

  heading(ctx.title, 18);
  paragraph(
    `Home-print sheets: ${ctx.sheets} front sheet${ctx.sheets === 1 ? '' : 's'}${ctx.hasBacks ? ', each followed by its back sheet' : ''}, ` +
      `${layout.perSheet} cards per sheet (${layout.cols} x ${layout.rows}) on ${paperName} paper, ${layout.orientation}. ` +
      `Cards are at their finished size, ${inches(trimIn.w)} x ${inches(trimIn.h)} in (${mm(trimIn.w)} x ${mm(trimIn.h)} mm).`,
  );

  heading('How to print', 13);
  paragraph(
    'Print at 100% ("Actual size"). Turn off "Fit to page", "Shrink oversized pages" and any other scaling, ' +
      'or the cards come out the wrong size. Skip this first page if you like.',
  );
  paragraph(`Print one sheet first and measure a card with a ruler: it should be ${inches(trimIn.w)} x ${inches(trimIn.h)} in.`);
  if (ctx.hasBacks) {
    paragraph(
      `Print double-sided and choose "flip on ${flipEdge}"${layout.orientation === 'portrait' ? ' (long-edge binding)' : ''}. ` +
        'Each back sheet is mirrored left to right so every back lands behind its own front.',
    );
    paragraph(
      'If your printer cannot print on both sides, print the front sheets, put them back in the tray the way your ' +
        'printer needs, then print the back sheets. Try it with one sheet first.',
    );
  } else {
    paragraph('Print single-sided: these cards have no backs.');
  }
  paragraph('Thicker paper or card stock (about 200 to 300 g/m2) makes cards that shuffle better, if your printer takes it.');

  heading('How to cut', 13);
  paragraph(
    ctx.marks
      ? 'The cards touch each other with no gap, so every cut is a straight line right across the sheet. Line a ruler ' +
          'up with a pair of crop marks in the margins and cut from one mark to the matching mark on the other side.'
      : 'The cards touch each other with no gap, so every cut is a straight line along the card edges right across the sheet.',
  );
  paragraph('Cut the long lines first, then the short ones. A cutting mat and a metal ruler give the cleanest edges.');

  heading('Caution: cutting tools are sharp', 13);
  paragraph(
    'Cutting tools (craft knives, guillotines, rotary trimmers) are sharp. Cut away from your body, keep your fingers ' +
      'clear of the blade, keep the tools away from children, and follow the tool maker\'s instructions and local rules.',
  );

  heading('Your rights to the art', 13);
  paragraph('Only print art you have the rights to print.');
}
