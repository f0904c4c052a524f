import { execFile } from 'node:child_process';
import { mkdtemp, readFile, rm, stat, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { promisify } from 'node:util';
import sharp from 'sharp';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { writeCombinedPdf, type PdfPage } from '../../jobs/engine/pdf.ts';

const run = promisify(execFile);

let dir: string;

beforeAll(async () => {
  dir = await mkdtemp(path.join(tmpdir(), 'bw-pdf-'));
});

afterAll(async () => {
  await rm(dir, { recursive: true, force: true });
});

/** Deterministic noise so the PNG uses several filter types and cannot compress to nothing. */
function noise(width: number, height: number, seed: number): Buffer {
  const buf = Buffer.alloc(width * height * 3);
  let x = Math.imul(seed, 2654435761) + 1;
  for (let i = 0; i < buf.length; i++) {
    x = (Math.imul(x, 1103515245) + 12345) >>> 0;
    buf[i] = (x >>> 16) & 0xff;
  }
  return buf;
}

async function makePng(name: string, width: number, height: number, seed: number): Promise<string> {
  const file = path.join(dir, name);
  await sharp(noise(width, height, seed), { raw: { width, height, channels: 3 } }).png().toFile(file);
  return file;
}

async function rawPixels(file: string): Promise<Buffer> {
  return sharp(file).removeAlpha().raw().toBuffer();
}

type QpdfObjects = Record<string, { value?: Record<string, unknown> }>;

async function qpdfObjects(file: string): Promise<QpdfObjects> {
  const { stdout } = await run('qpdf', ['--json', '--json-key=qpdf', file], { maxBuffer: 64 * 1024 * 1024 });
  return (JSON.parse(stdout) as { qpdf: [unknown, QpdfObjects] }).qpdf[1];
}

async function pageDicts(file: string): Promise<Array<Record<string, unknown>>> {
  const objects = await qpdfObjects(file);
  const catalogs = Object.values(objects).filter((o) => o.value?.['/Type'] === '/Pages' && !o.value?.['/Parent']);
  const kids = catalogs[0].value!['/Kids'] as string[];
  return kids.map((ref) => objects[`obj:${ref}`].value!);
}

describe('writeCombinedPdf', () => {
  // Poker 2.5 x 3.5 in with 1/8 in bleed (common practice): page 2.75 x 3.75 in = 198 x 270 pt at
  // 1/72 in per unit (ISO 32000-1 8.3.2), bleed 9 pt.
  const pagePt = { w: 198, h: 270 };
  const bleedPt = 9;

  it('writes poker pages with MediaBox = BleedBox = page and TrimBox inset by the bleed', async () => {
    const front = await makePng('front.png', 66, 90, 1);
    const back = await makePng('back.png', 66, 90, 2);
    const outPath = path.join(dir, 'boxes.pdf');
    const pages: PdfPage[] = [
      { kind: 'card', pngPath: front },
      { kind: 'blank' },
      { kind: 'card', pngPath: back },
    ];
    const result = await writeCombinedPdf({ pages, pagePt, bleedPt, title: 'Lantern Moth deck', outPath });
    expect(result.pages).toBe(3);
    expect(result.bytes).toBe((await stat(outPath)).size);

    // qpdf checks syntax and that every stream decodes.
    const check = await run('qpdf', ['--check', outPath]);
    expect(check.stdout).toContain('No syntax or stream encoding errors found');

    // poppler's view of the boxes (ISO 32000-1 14.11.2 page boundaries).
    const { stdout: info } = await run('pdfinfo', ['-box', '-f', '1', '-l', '3', outPath]);
    expect(info).toMatch(/^Title:\s+Lantern Moth deck$/m);
    expect(info).toMatch(/^Producer:\s+Bleedwright$/m);
    expect(info).toMatch(/^Pages:\s+3$/m);
    for (const n of [1, 2, 3]) {
      expect(info).toMatch(new RegExp(`^Page\\s+${n} size:\\s+198 x 270 pts`, 'm'));
      expect(info).toMatch(new RegExp(`^Page\\s+${n} TrimBox:\\s+9\\.00\\s+9\\.00\\s+189\\.00\\s+261\\.00$`, 'm'));
      expect(info).toMatch(new RegExp(`^Page\\s+${n} BleedBox:\\s+0\\.00\\s+0\\.00\\s+198\\.00\\s+270\\.00$`, 'm'));
    }

    // pdfinfo clips boxes to the MediaBox, so read the raw page dictionaries as well; 14.11.2 says the
    // boxes must lie within the MediaBox.
    const dicts = await pageDicts(outPath);
    expect(dicts).toHaveLength(3);
    for (const d of dicts) {
      expect(d['/MediaBox']).toEqual([0, 0, 198, 270]);
      expect(d['/BleedBox']).toEqual([0, 0, 198, 270]);
      expect(d['/TrimBox']).toEqual([9, 9, 189, 261]);
      const [mx0, my0, mx1, my1] = d['/MediaBox'] as number[];
      const [tx0, ty0, tx1, ty1] = d['/TrimBox'] as number[];
      expect(tx0 >= mx0 && ty0 >= my0 && tx1 <= mx1 && ty1 <= my1 && tx0 < tx1 && ty0 < ty1).toBe(true);
      expect(d['/UserUnit']).toBeUndefined(); // default 1/72 in (ISO 32000-1 Table 30)
    }

    // Page 2 is the blank one: same boxes, no image.
    const { stdout: list } = await run('pdfimages', ['-list', outPath]);
    const imagePages = list
      .split('\n')
      .slice(2)
      .filter((l) => l.trim())
      .map((l) => Number(l.trim().split(/\s+/)[0]));
    expect(imagePages).toEqual([1, 3]);
  });

  it('stores the PNG pixels losslessly (pdfimages round trip)', async () => {
    const src = await makePng('roundtrip.png', 83, 113, 7);
    const outPath = path.join(dir, 'roundtrip.pdf');
    await writeCombinedPdf({ pages: [{ kind: 'card', pngPath: src }], pagePt, bleedPt, title: 'Round trip', outPath });
    const prefix = path.join(dir, 'rt');
    await run('pdfimages', ['-png', '-f', '1', '-l', '1', outPath, prefix]);
    const extracted = `${prefix}-000.png`;
    const meta = await sharp(extracted).metadata();
    expect([meta.width, meta.height]).toEqual([83, 113]);
    expect((await rawPixels(extracted)).equals(await rawPixels(src))).toBe(true);
  });

  it('places a full-size poker card at 300 DPI, pixels intact', async () => {
    // poker + 1/8 in bleed at 300 DPI = 825 x 1125 px (arithmetic); on a 198 x 270 pt page that is 300 ppi.
    const svg =
      '<svg xmlns="http://www.w3.org/2000/svg" width="825" height="1125"><defs><linearGradient id="g" x2="1" y2="1">' +
      '<stop offset="0" stop-color="#1b3a5c"/><stop offset="1" stop-color="#e8b04a"/></linearGradient></defs>' +
      '<rect width="825" height="1125" fill="url(#g)"/><circle cx="412" cy="562" r="240" fill="#7a1f3d"/></svg>';
    const src = path.join(dir, 'poker.png');
    await sharp(Buffer.from(svg)).removeAlpha().png().toFile(src);
    const outPath = path.join(dir, 'poker.pdf');
    await writeCombinedPdf({ pages: [{ kind: 'card', pngPath: src }], pagePt, bleedPt, title: 'Poker', outPath });
    const { stdout: list } = await run('pdfimages', ['-list', outPath]);
    const row = list.split('\n')[2].trim().split(/\s+/);
    // columns: page num type width height color comp bpc enc interp object ID x-ppi y-ppi
    expect(row.slice(3, 6)).toEqual(['825', '1125', 'rgb']);
    expect(row.slice(12, 14)).toEqual(['300', '300']);
    const prefix = path.join(dir, 'poker-out');
    await run('pdfimages', ['-png', outPath, prefix]);
    expect((await rawPixels(`${prefix}-000.png`)).equals(await rawPixels(src))).toBe(true);
  });

  it('passes the PNG data through unchanged', async () => {
    const src = await makePng('passthrough.png', 40, 50, 11);
    const outPath = path.join(dir, 'passthrough.pdf');
    await writeCombinedPdf({ pages: [{ kind: 'card', pngPath: src }], pagePt, bleedPt, title: 'Pass', outPath });
    const { stdout } = await run('qpdf', ['--show-object=5', '--raw-stream-data', outPath], { encoding: 'buffer' });
    // The raw (still compressed) stream must be the PNG's IDAT payload, byte for byte.
    const png = await readFile(src);
    const idat: Buffer[] = [];
    for (let pos = 8; pos < png.length; ) {
      const len = png.readUInt32BE(pos);
      if (png.toString('latin1', pos + 4, pos + 8) === 'IDAT') idat.push(png.subarray(pos + 8, pos + 8 + len));
      pos += 12 + len;
    }
    expect(Buffer.compare(stdout, Buffer.concat(idat))).toBe(0);
  });

  it('stores an image used on several pages once', async () => {
    const card = await makePng('shared-a.png', 30, 40, 3);
    const back = await makePng('shared-back.png', 30, 40, 4);
    const outPath = path.join(dir, 'shared.pdf');
    const pages: PdfPage[] = [
      { kind: 'card', pngPath: card },
      { kind: 'card', pngPath: back },
      { kind: 'card', pngPath: card },
      { kind: 'card', pngPath: back },
    ];
    await writeCombinedPdf({ pages, pagePt, bleedPt, title: 'Copies', outPath });
    const { stdout } = await run('pdfimages', ['-list', outPath]);
    const rows = stdout
      .split('\n')
      .slice(2)
      .filter((l) => l.trim())
      .map((l) => l.trim().split(/\s+/));
    // columns: page num type width height color comp bpc enc interp object ID ...
    const objectByPage = rows.map((r) => Number(r[10]));
    expect(objectByPage).toHaveLength(4);
    expect(objectByPage[0]).toBe(objectByPage[2]);
    expect(objectByPage[1]).toBe(objectByPage[3]);
    expect(objectByPage[0]).not.toBe(objectByPage[1]);
    const { stdout: check } = await run('qpdf', ['--check', outPath]);
    expect(check).toContain('No syntax or stream encoding errors found');
  });

  it('writes the same bytes on a retry and leaves no temp file', async () => {
    const card = await makePng('retry.png', 20, 30, 5);
    const a = path.join(dir, 'retry-a.pdf');
    const b = path.join(dir, 'retry-b.pdf');
    const pages: PdfPage[] = [{ kind: 'card', pngPath: card }, { kind: 'blank' }];
    await writeCombinedPdf({ pages, pagePt, bleedPt, title: 'Retry', outPath: a });
    await writeCombinedPdf({ pages, pagePt, bleedPt, title: 'Retry', outPath: b });
    expect((await readFile(a)).equals(await readFile(b))).toBe(true);
    await expect(stat(`${a}.tmp`)).rejects.toThrow();
  });

  it('handles a metric page whose size is not a whole number of points', async () => {
    // poker 63.5 x 88.9 mm + 3 mm bleed: (63.5 + 6) / 25.4 * 72 = 197.0079 pt wide.
    const w = ((63.5 + 6) / 25.4) * 72;
    const h = ((88.9 + 6) / 25.4) * 72;
    const bleed = (3 / 25.4) * 72;
    const card = await makePng('metric.png', 21, 28, 6);
    const outPath = path.join(dir, 'metric.pdf');
    await writeCombinedPdf({ pages: [{ kind: 'card', pngPath: card }], pagePt: { w, h }, bleedPt: bleed, title: 'Metric', outPath });
    const [d] = await pageDicts(outPath);
    const trim = d['/TrimBox'] as number[];
    expect(trim[0]).toBeCloseTo(8.5039, 3);
    expect(trim[2] - trim[0]).toBeCloseTo((63.5 / 25.4) * 72, 3);
    const { stdout } = await run('qpdf', ['--check', outPath]);
    expect(stdout).toContain('No syntax or stream encoding errors found');
  });

  it('rejects PNGs that cannot be passed through, with a stable code', async () => {
    const rgba = path.join(dir, 'rgba.png');
    await sharp({ create: { width: 10, height: 10, channels: 4, background: { r: 1, g: 2, b: 3, alpha: 0.5 } } })
      .png()
      .toFile(rgba);
    const outPath = path.join(dir, 'bad.pdf');
    await expect(
      writeCombinedPdf({ pages: [{ kind: 'card', pngPath: rgba }], pagePt, bleedPt, title: 'Bad', outPath }),
    ).rejects.toMatchObject({ code: 'PDF_IMAGE_FORMAT' });
    const truncated = path.join(dir, 'truncated.png');
    const good = await readFile(await makePng('whole.png', 30, 30, 9));
    await writeFile(truncated, good.subarray(0, good.length - 20));
    await expect(
      writeCombinedPdf({ pages: [{ kind: 'card', pngPath: truncated }], pagePt, bleedPt, title: 'Bad', outPath }),
    ).rejects.toMatchObject({ code: 'PDF_IMAGE_TRUNCATED' });
    await expect(stat(outPath)).rejects.toThrow();
    await expect(stat(`${outPath}.tmp`)).rejects.toThrow();
  });

  it('stops at a damaged card among others still being written, and leaves no file behind', async () => {
    const cards = await Promise.all(Array.from({ length: 8 }, (_, i) => makePng(`good-${i}.png`, 40, 56, 20 + i)));
    const good = await readFile(cards[5]!);
    // One byte of image data flipped: the IDAT chunk's CRC (PNG spec 5.3) no longer matches.
    const damaged = Buffer.from(good);
    const idat = damaged.indexOf('IDAT', 0, 'latin1');
    damaged[idat + 10] = damaged[idat + 10]! ^ 0xff;
    await writeFile(cards[5]!, damaged);
    const outPath = path.join(dir, 'damaged.pdf');
    await expect(
      writeCombinedPdf({ pages: cards.map((pngPath) => ({ kind: 'card' as const, pngPath })), pagePt, bleedPt, title: 'Damaged', outPath }),
    ).rejects.toMatchObject({ code: 'PDF_IMAGE_CORRUPT' });
    await expect(stat(outPath)).rejects.toThrow();
    await expect(stat(`${outPath}.tmp`)).rejects.toThrow();
  });
});
