import { execFile } from 'node:child_process';
import { mkdtemp, readFile, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { promisify } from 'node:util';
import sharp from 'sharp';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { layoutSheet, MARK_WIDTH_PT, writeImposedSheets, type Rect, type Segment } from '../../jobs/engine/sheets.ts';

const run = promisify(execFile);
const poker = { w: 2.5, h: 3.5 }; // common practice
const bleedIn = 0.125; // common practice

let dir: string;
beforeAll(async () => {
  dir = await mkdtemp(path.join(tmpdir(), 'bw-sheets-'));
});
afterAll(async () => {
  await rm(dir, { recursive: true, force: true });
});

/** Does a stroked segment (with half its line width on each side) reach into the rectangle's interior? */
function entersInterior(seg: Segment, rect: Rect, halfWidth: number): boolean {
  const minX = Math.min(seg.x1, seg.x2) - halfWidth;
  const maxX = Math.max(seg.x1, seg.x2) + halfWidth;
  const minY = Math.min(seg.y1, seg.y2) - halfWidth;
  const maxY = Math.max(seg.y1, seg.y2) + halfWidth;
  return minX < rect.x + rect.w && maxX > rect.x && minY < rect.y + rect.h && maxY > rect.y;
}

/** Card image at 72 DPI (1 px = 1 pt; small and fast): trim area `trim` colour, bleed ring red. */
async function cardPng(name: string, trim: [number, number, number]): Promise<string> {
  const dpi = 72;
  const bleedPx = Math.round(bleedIn * dpi);
  const w = Math.round((poker.w + 2 * bleedIn) * dpi);
  const h = Math.round((poker.h + 2 * bleedIn) * dpi);
  const inner = await sharp({ create: { width: w - 2 * bleedPx, height: h - 2 * bleedPx, channels: 3, background: { r: trim[0], g: trim[1], b: trim[2] } } })
    .png()
    .toBuffer();
  const file = path.join(dir, name);
  await sharp({ create: { width: w, height: h, channels: 3, background: { r: 255, g: 0, b: 0 } } })
    .composite([{ input: inner, left: bleedPx, top: bleedPx }])
    .removeAlpha()
    .png()
    .toFile(file);
  return file;
}

/** Renders one page at 72 DPI (1 px = 1 pt) with poppler and returns a pixel reader in PDF coordinates. */
async function renderPage(pdf: string, page: number): Promise<(x: number, y: number) => [number, number, number]> {
  const prefix = path.join(dir, `render-${path.basename(pdf)}-${page}`);
  await run('pdftoppm', ['-r', '72', '-png', '-singlefile', '-f', String(page), '-l', String(page), pdf, prefix]);
  const { data, info } = await sharp(await readFile(`${prefix}.png`)).removeAlpha().raw().toBuffer({ resolveWithObject: true });
  return (x, y) => {
    const px = Math.floor(x);
    const py = Math.floor(info.height - y);
    const i = (py * info.width + px) * 3;
    return [data[i], data[i + 1], data[i + 2]];
  };
}

const near = (a: number[], b: number[]) => a.every((v, i) => Math.abs(v - b[i]) <= 8);

describe('layoutSheet', () => {
  it.each([
    // Letter 8.5 x 11 in = 612 x 792 pt (ANSI/ASME Y14.1); A4 = 595.28 x 841.89 pt (ISO 216).
    ['letter', 612, 792],
    ['a4', 595.28, 841.89],
  ] as const)('fits 3 x 3 poker cards at trim on %s, portrait', (paper, w, h) => {
    const layout = layoutSheet({ paper, trimIn: poker, marks: true });
    expect([layout.pageW, layout.pageH]).toEqual([w, h]);
    expect(layout.orientation).toBe('portrait');
    expect([layout.cols, layout.rows, layout.perSheet]).toEqual([3, 3, 9]);
    for (const c of layout.cards) {
      expect(c.w).toBeCloseTo(180, 6); // 2.5 in x 72
      expect(c.h).toBeCloseTo(252, 6);
      expect(c.x).toBeGreaterThan(0);
      expect(c.y).toBeGreaterThan(0);
      expect(c.x + c.w).toBeLessThan(w);
      expect(c.y + c.h).toBeLessThan(h);
    }
  });

  it.each(['letter', 'a4'] as const)('puts crop marks on %s only outside every card, on every edge line', (paper) => {
    const layout = layoutSheet({ paper, trimIn: poker, marks: true });
    expect(layout.marks.length).toBeGreaterThan(0);
    for (const seg of layout.marks) {
      for (const card of layout.cards) expect(entersInterior(seg, card, MARK_WIDTH_PT / 2)).toBe(false);
      for (const v of [seg.x1, seg.x2]) expect(v >= 0 && v <= layout.pageW).toBe(true);
      for (const v of [seg.y1, seg.y2]) expect(v >= 0 && v <= layout.pageH).toBe(true);
    }
    // Every vertical card edge line has a mark above and below the grid; every horizontal one, left and right.
    const xs = [...new Set(layout.cards.flatMap((c) => [c.x, c.x + c.w].map((v) => v.toFixed(3))))];
    const ys = [...new Set(layout.cards.flatMap((c) => [c.y, c.y + c.h].map((v) => v.toFixed(3))))];
    expect(xs).toHaveLength(4);
    expect(ys).toHaveLength(4);
    for (const x of xs) {
      expect(layout.marks.filter((m) => m.x1 === m.x2 && m.x1.toFixed(3) === x)).toHaveLength(2);
    }
    for (const y of ys) {
      expect(layout.marks.filter((m) => m.y1 === m.y2 && m.y1.toFixed(3) === y)).toHaveLength(2);
    }
  });

  it('draws no marks when asked for none', () => {
    expect(layoutSheet({ paper: 'letter', trimIn: poker, marks: false }).marks).toEqual([]);
  });

  it('mirrors back positions left-right for long-edge duplex', () => {
    const layout = layoutSheet({ paper: 'a4', trimIn: poker, marks: true });
    for (let slot = 0; slot < layout.perSheet; slot++) {
      const r = Math.floor(slot / layout.cols);
      const c = slot % layout.cols;
      expect(layout.backCards[slot]).toEqual(layout.cards[r * layout.cols + (layout.cols - 1 - c)]);
    }
    // The back of the top-left card is top-right on the back sheet.
    expect(layout.backCards[0].x).toBeGreaterThan(layout.cards[0].x);
    expect(layout.backCards[0].y).toBe(layout.cards[0].y);
  });

  it('turns the paper when that fits more cards', () => {
    // Poker with bleed, 2.75 x 3.75 in: 3 x 3 is 8.25 x 11.25 in and does not fit Letter (arithmetic).
    const layout = layoutSheet({ paper: 'letter', trimIn: { w: 2.75, h: 3.75 }, marks: true });
    expect(layout.perSheet).toBeLessThan(9);
    expect(layout.orientation).toBe('landscape');
    expect([layout.pageW, layout.pageH]).toEqual([792, 612]);
    expect([layout.cols, layout.rows]).toEqual([3, 2]);
  });

  it('rejects a card larger than the paper with a stable code', () => {
    expect(() => layoutSheet({ paper: 'a4', trimIn: { w: 12, h: 14 }, marks: true })).toThrow(
      expect.objectContaining({ code: 'SHEET_CARD_TOO_LARGE' }),
    );
  });
});

describe('writeImposedSheets', () => {
  it('writes Letter and A4 sheets with an instructions page, fronts, mirrored backs and clipped bleed', async () => {
    const colours: Array<[number, number, number]> = [
      [20, 120, 220], [240, 200, 20], [30, 160, 60], [120, 40, 160], [250, 130, 30],
      [10, 10, 80], [200, 200, 200], [90, 60, 30], [0, 140, 140], [180, 0, 120],
    ];
    const fronts = await Promise.all(colours.map((c, i) => cardPng(`front-${i}.png`, c)));
    const backColours = colours.map(([r, g, b]) => [255 - r, 255 - g, 255 - b] as [number, number, number]);
    const backs = await Promise.all(backColours.map((c, i) => cardPng(`back-${i}.png`, c)));
    // Slot 4 is an empty slot; card 9 has no back.
    const frontSlots: Array<string | null> = [...fronts];
    frontSlots[4] = null;
    const backSlots: Array<string | null> = [...backs];
    backSlots[4] = null;
    backSlots[9] = null;

    for (const [paper, size] of [
      ['letter', '612 x 792 pts'], // ANSI/ASME Y14.1
      ['a4', '595.28 x 841.89 pts'], // ISO 216
    ] as const) {
      const outPath = path.join(dir, `sheets-${paper}.pdf`);
      const result = await writeImposedSheets({
        fronts: frontSlots, backs: backSlots, paper, marks: true, trimIn: poker, bleedIn, title: 'Ember Wardens home print', outPath,
      });
      expect(result).toEqual({ sheets: 2, perSheet: 9 });

      const { stdout: info } = await run('pdfinfo', [outPath]);
      expect(info).toMatch(/^Pages:\s+5$/m); // instructions + 2 x (front + back)
      expect(info).toMatch(/^Title:\s+Ember Wardens home print$/m);
      expect(info).toContain(`Page size:       ${size}`);
      const { stdout: check } = await run('qpdf', ['--check', outPath]);
      expect(check).toContain('No syntax or stream encoding errors found');

      const layout = layoutSheet({ paper, trimIn: poker, marks: true });
      const front1 = await renderPage(outPath, 2);
      const back1 = await renderPage(outPath, 3);
      for (let slot = 0; slot < 9; slot++) {
        const card = layout.cards[slot];
        const backCard = layout.backCards[slot];
        const centre = (r: Rect): [number, number] => [r.x + r.w / 2, r.y + r.h / 2];
        if (slot === 4) {
          expect(front1(...centre(card))).toEqual([255, 255, 255]);
          expect(back1(...centre(backCard))).toEqual([255, 255, 255]);
          continue;
        }
        expect(near(front1(...centre(card)), colours[slot])).toBe(true);
        expect(near(back1(...centre(backCard)), backColours[slot])).toBe(true);
        // Just inside the trim edge there is trim colour, not the red bleed: the bleed is clipped away.
        expect(near(front1(card.x + 2, card.y + 2), colours[slot])).toBe(true);
        expect(near(front1(card.x + card.w - 2, card.y + card.h - 2), colours[slot])).toBe(true);
      }
      // Outside the grid, the margin is paper white (no bleed spills out).
      const first = layout.cards[0];
      expect(front1(first.x - 2, first.y + first.h / 2)).toEqual([255, 255, 255]);
      // Second front sheet: card 9 in slot 0; its back sheet has no card there.
      const front2 = await renderPage(outPath, 4);
      const back2 = await renderPage(outPath, 5);
      expect(near(front2(layout.cards[0].x + 90, layout.cards[0].y + 126), colours[9])).toBe(true);
      expect(back2(layout.backCards[0].x + 90, layout.backCards[0].y + 126)).toEqual([255, 255, 255]);
    }
  });

  it('puts print, cutting and safety guidance on the instructions page', async () => {
    const card = await cardPng('solo.png', [50, 100, 150]);
    const outPath = path.join(dir, 'guide.pdf');
    const result = await writeImposedSheets({
      fronts: [card, card, card], backs: [card, card, card], paper: 'letter', marks: true, trimIn: poker, bleedIn, title: 'Guide', outPath,
    });
    expect(result).toEqual({ sheets: 1, perSheet: 9 });
    const { stdout } = await run('pdftotext', ['-f', '1', '-l', '1', outPath, '-']);
    const text = stdout.replace(/\s+/g, ' ');
    expect(text).toContain('Print at 100% ("Actual size")');
    expect(text).toContain('"Fit to page"');
    expect(text).toContain('flip on long edge');
    expect(text).toMatch(/Cutting tools \(craft knives, guillotines, rotary trimmers\) are sharp/);
    expect(text).toContain('Cut away from your body');
    expect(text).toContain('keep your fingers clear of the blade');
    expect(text).toContain('keep the tools away from children');
    expect(text).toContain("follow the tool maker's instructions and local rules");
    expect(text).toContain('Only print art you have the rights to print.');
  });

  it('writes the same bytes on a retry (no dates or random ids)', async () => {
    const card = await cardPng('again.png', [10, 200, 90]);
    const args = { fronts: [card, null, card], backs: [card, null, null], paper: 'a4' as const, marks: true, trimIn: poker, bleedIn, title: 'Again' };
    await writeImposedSheets({ ...args, outPath: path.join(dir, 'again-1.pdf') });
    await writeImposedSheets({ ...args, outPath: path.join(dir, 'again-2.pdf') });
    const [a, b] = await Promise.all([readFile(path.join(dir, 'again-1.pdf')), readFile(path.join(dir, 'again-2.pdf'))]);
    expect(a.equals(b)).toBe(true);
  });

  it('writes no back sheets when no card has a back', async () => {
    const card = await cardPng('nob.png', [90, 90, 20]);
    const outPath = path.join(dir, 'noback.pdf');
    const fronts = Array.from({ length: 10 }, () => card);
    const result = await writeImposedSheets({
      fronts, backs: fronts.map(() => null), paper: 'a4', marks: false, trimIn: poker, bleedIn, title: 'No backs', outPath,
    });
    expect(result).toEqual({ sheets: 2, perSheet: 9 });
    const { stdout } = await run('pdfinfo', [outPath]);
    expect(stdout).toMatch(/^Pages:\s+3$/m);
    const { stdout: text } = await run('pdftotext', ['-f', '1', '-l', '1', outPath, '-']);
    expect(text.replace(/\s+/g, ' ')).toContain('Print single-sided');
  });
});
