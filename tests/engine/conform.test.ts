import { mkdtemp, readFile, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import path from 'node:path';
import sharp from 'sharp';
import { beforeAll, describe, expect, it } from 'vitest';
import { conformCard, encodeSingle, type ConformedCard, type ConformResult } from '../../jobs/engine/conform.ts';
import { markDuplicates } from '../../jobs/engine/preflight.ts';
import { parseRecipe, recipeGeometry, type RecipeInput } from '../../shared/recipe.ts';
import { near, rawRgb, run, solidPng, svgPng } from './helpers.ts';

let dir: string;
beforeAll(async () => {
  dir = await mkdtemp(path.join(tmpdir(), 'bw-conform-'));
});

const recipe = (extra: Partial<RecipeInput> = {}) => parseRecipe({ name: 'test', ...extra });

function ok(r: ConformResult): ConformedCard {
  if (!r.png) throw new Error(`card rejected: ${JSON.stringify(r.info.findings)}`);
  return r;
}

async function conform(input: Buffer, extra: Partial<RecipeInput> = {}, sourceName = 'card.png') {
  return conformCard({ input, sourceName, recipe: recipe(extra) });
}

// Portrait trim art with a busy (non-uniform) edge: gradient plus a shape.
const busyArt = (w: number, h: number) =>
  svgPng(w, h, `<defs><linearGradient id="g" x2="1" y2="1"><stop offset="0" stop-color="#123456"/><stop offset="1" stop-color="#e0a040"/></linearGradient></defs><rect width="${w}" height="${h}" fill="url(#g)"/><circle cx="${w / 3}" cy="${h / 4}" r="${w / 6}" fill="#ff0000"/>`);

describe('sizes and written resolution', () => {
  it('poker + 1/8 in bleed at 300 DPI -> 825 x 1125 px, bridge -> 750 x 1125, with pHYs 11811 px/m', async () => {
    // common practice, no source; arithmetic. pHYs: PNG specification (ISO/IEC 15948), unit 1 = metre.
    const art = await busyArt(750, 1050);
    const poker = ok(await conform(art));
    const bridge = ok(await conform(art, { trim: 'bridge' }));
    const pokerFile = path.join(dir, 'poker.png');
    const bridgeFile = path.join(dir, 'bridge.png');
    await writeFile(pokerFile, poker.png);
    await writeFile(bridgeFile, bridge.png);
    const identify = (f: string) => run('/usr/bin/identify', ['-units', 'PixelsPerInch', '-format', '%w %h %x %y', f]).stdout.trim();
    expect(identify(pokerFile)).toBe('825 1125 300 300');
    expect(identify(bridgeFile)).toBe('750 1125 300 300');
    const exif = run('exiftool', ['-s', '-n', '-PixelsPerUnitX', '-PixelsPerUnitY', '-PixelUnits', pokerFile]).stdout;
    expect(exif).toMatch(/PixelsPerUnitX\s+: 11811/);
    expect(exif).toMatch(/PixelsPerUnitY\s+: 11811/);
    expect(exif).toMatch(/PixelUnits\s+: 1/);
    // What the PDF writer relies on: 8-bit RGB (colour type 2), not interlaced (PNG IHDR).
    expect(poker.png.readUInt8(24)).toBe(8);
    expect(poker.png.readUInt8(25)).toBe(2);
    expect(poker.png.readUInt8(28)).toBe(0);
  });

  it('writes density into TIFF and JPEG singles', async () => {
    // TIFF 6.0 XResolution/ResolutionUnit; JFIF 1.02 density units
    const card = ok(await conform(await busyArt(150, 210), { dpi: 150 }));
    for (const format of ['tiff', 'jpeg'] as const) {
      const file = path.join(dir, `single.${format}`);
      await writeFile(file, await encodeSingle(card.png, format, 150));
      expect(run('/usr/bin/identify', ['-units', 'PixelsPerInch', '-format', '%w %h %x %y', file]).stdout.trim()).toBe('413 563 150 150');
    }
  });
});

describe('bleed pixels', () => {
  it('a solid-fill bleed really is that colour', async () => {
    const card = ok(await conform(await busyArt(750, 1050), { fill: { mode: 'solid', color: '#12ab34' } }));
    const img = await rawRgb(card.png);
    const geo = recipeGeometry(recipe());
    for (const [x, y] of [[0, 0], [36, 500], [824, 1124], [400, geo.bleedEdgesPx.top - 1], [geo.pagePx.w - 1, 600]] as const) {
      expect(img.px(x, y)).toEqual([0x12, 0xab, 0x34]);
    }
    expect(card.info.fill).toBe('solid');
  });

  it('a mirror bleed mirrors the rows next to the trim', async () => {
    const card = ok(await conform(await busyArt(750, 1050), { fill: { mode: 'mirror' } }));
    const img = await rawRgb(card.png);
    const top = recipeGeometry(recipe()).bleedEdgesPx.top; // 37
    const row = (y: number) => img.data.subarray(y * img.w * 3, (y + 1) * img.w * 3);
    for (let k = 0; k < top; k++) expect(row(top - 1 - k).equals(row(top + k))).toBe(true);
    const left = recipeGeometry(recipe()).bleedEdgesPx.left;
    for (let k = 0; k < left; k++) expect(img.px(left - 1 - k, 500)).toEqual(img.px(left + k, 500));
  });

  it('an edge bleed repeats the outermost pixels', async () => {
    const card = ok(await conform(await busyArt(750, 1050), { fill: { mode: 'edge' } }));
    const img = await rawRgb(card.png);
    for (let y = 0; y < 37; y++) expect(img.px(300, y)).toEqual(img.px(300, 37));
  });

  it('auto picks solid for a one-colour ring and mirror otherwise', async () => {
    const framed = await svgPng(750, 1050, '<rect width="750" height="1050" fill="#202080"/><circle cx="375" cy="525" r="200" fill="#ffee00"/>');
    const solid = ok(await conform(framed));
    expect(solid.info.fill).toBe('solid');
    expect(near((await rawRgb(solid.png)).px(2, 2), [0x20, 0x20, 0x80])).toBe(true);
    expect(ok(await conform(await busyArt(750, 1050))).info.fill).toBe('mirror');
  });
});

describe('turning and orientation', () => {
  // Asymmetric landscape art: a red band on the left edge, blue elsewhere.
  const landscape = () => svgPng(1050, 750, '<rect width="1050" height="750" fill="#0000ff"/><rect width="100" height="750" fill="#ff0000"/>');

  it('clockwise puts the left edge of landscape art on top', async () => {
    const card = ok(await conform(await landscape(), { fill: { mode: 'mirror' } }));
    expect(card.info.turn).toBe('clockwise');
    const img = await rawRgb(card.png);
    expect(near(img.px(412, 60), [255, 0, 0])).toBe(true);
    expect(near(img.px(412, 1060), [0, 0, 255])).toBe(true);
  });

  it('counterclockwise (by a turn rule) puts it at the bottom; keep leaves it', async () => {
    const ccw = ok(await conformCard({ input: await landscape(), sourceName: 'wide/scene-1.png', recipe: recipe({ turnRules: [{ match: 'wide/*.png', turn: 'counterclockwise' }] }) }));
    expect(ccw.info.turn).toBe('counterclockwise');
    const img = await rawRgb(ccw.png);
    expect(near(img.px(412, 1060), [255, 0, 0])).toBe(true);
    expect(near(img.px(412, 60), [0, 0, 255])).toBe(true);
    const kept = ok(await conform(await landscape(), { turn: 'keep' }));
    expect(kept.info.turn).toBe('none');
  });

  it('honours EXIF orientation', async () => {
    // Portrait art stored sideways with EXIF Orientation 6 (rotate 90 CW to display): the stored left
    // edge (red) shows on top once oriented.
    const stored = await sharp(await landscape()).jpeg({ quality: 95 }).withMetadata({ orientation: 6 }).toBuffer();
    const card = ok(await conform(stored, { fill: { mode: 'mirror' } }, 'photo.jpg'));
    expect(card.info.turn).toBe('none');
    const img = await rawRgb(card.png);
    expect(near(img.px(412, 60), [255, 0, 0], 12)).toBe(true);
    expect(near(img.px(412, 1060), [0, 0, 255], 12)).toBe(true);
  });
});

describe('colour and transparency', () => {
  it('flattens transparency onto the solid fill colour', async () => {
    const art = await sharp({ create: { width: 750, height: 1050, channels: 4, background: { r: 0, g: 0, b: 0, alpha: 0 } } })
      .composite([{ input: await solidPng(300, 300, '#ff0000'), left: 225, top: 375 }])
      .png()
      .toBuffer();
    const card = ok(await conform(art, { fill: { mode: 'solid', color: '#00ff00' } }));
    expect(card.info.findings.map((f) => f.code)).toContain('TRANSPARENCY_FLATTENED');
    const img = await rawRgb(card.png);
    expect(img.px(100, 100)).toEqual([0, 255, 0]);
    expect(near(img.px(412, 562), [255, 0, 0])).toBe(true);
    expect((await sharp(card.png).metadata()).hasAlpha).toBe(false);
  });

  it('converts CMYK, 16-bit and grayscale input to 8-bit sRGB and says so', async () => {
    const base = await busyArt(750, 1050);
    const inputs: Array<[string, Buffer, string]> = [
      ['cmyk.jpg', await sharp(base).toColourspace('cmyk').jpeg().toBuffer(), 'CMYK'],
      ['deep.png', await sharp(base).toColourspace('rgb16').png().toBuffer(), '16-bit'],
      ['gray.png', await sharp(base).toColourspace('b-w').png().toBuffer(), 'grayscale'],
    ];
    for (const [name, input, from] of inputs) {
      const card = ok(await conformCard({ input, sourceName: name, recipe: recipe() }));
      const converted = card.info.findings.find((f) => f.code === 'COLOR_CONVERTED');
      expect(converted?.message, name).toContain(from);
      const meta = await sharp(card.png).metadata();
      expect([meta.space, meta.depth, meta.channels], name).toEqual(['srgb', 'uchar', 3]);
    }
  });
});

describe('preflight numbers', () => {
  it('low-resolution art gets VERY_LOW_DPI or LOW_DPI with the effective DPI', async () => {
    const veryLow = ok(await conform(await busyArt(300, 420)));
    const f = veryLow.info.findings.find((x) => x.code === 'VERY_LOW_DPI');
    expect(f?.numbers).toEqual({ effectiveDpi: 120, targetDpi: 300 }); // 300 px over 2.5 in
    expect(f?.severity).toBe('warn');
    const low = ok(await conform(await busyArt(600, 840)));
    expect(low.info.findings.find((x) => x.code === 'LOW_DPI')?.numbers.effectiveDpi).toBe(240);
    expect(low.info.findings.some((x) => x.code === 'VERY_LOW_DPI')).toBe(false);
  });

  it('reports an aspect mismatch with the share cropped or padded', async () => {
    const square = await busyArt(1050, 1050);
    const cover = ok(await conform(square));
    const m = cover.info.findings.find((x) => x.code === 'ASPECT_MISMATCH')!;
    // 1:1 art on a 750:1050 card: 1 - 750/1050 = 28.6% of the art cropped.
    expect(m.numbers.changedPercent).toBe(28.6);
    expect(m.message).toContain('cropped');
    const contain = ok(await conform(square, { fit: 'contain', fill: { mode: 'solid', color: '#ffffff' } }));
    expect(contain.info.findings.find((x) => x.code === 'ASPECT_MISMATCH')!.message).toContain('padded');
    expect((await rawRgb(contain.png)).px(412, 100)).toEqual([255, 255, 255]);
  });

  it('detects art that already has bleed and keeps it at full page size', async () => {
    const card = ok(await conform(await busyArt(825, 1125)));
    expect(card.info.sourceKind).toBe('bleed');
    expect(card.info.findings.map((f) => f.code)).toContain('HAS_BLEED');
    expect(card.info.effectiveDpi).toBe(300);
    // The pixels are the source's own: nothing mirrored in.
    expect((await rawRgb(card.png)).data.equals((await rawRgb(await busyArt(825, 1125))).data)).toBe(true);
  });

  it('uses only the first page of a multi-page file and says so', async () => {
    const first = path.join(dir, 'page1.png');
    const second = path.join(dir, 'page2.png');
    await writeFile(first, await svgPng(150, 210, '<rect width="150" height="210" fill="#ff0000"/><circle cx="40" cy="40" r="20" fill="#fff"/>'));
    await writeFile(second, await svgPng(150, 210, '<rect width="150" height="210" fill="#0000ff"/>'));
    const tiff = path.join(dir, 'two-pages.tif');
    expect(run('/usr/bin/convert', [first, second, tiff]).status).toBe(0);
    const card = ok(await conformCard({ input: await readFile(tiff), sourceName: 'two-pages.tif', recipe: recipe({ dpi: 72 }) }));
    expect(card.info.findings.find((f) => f.code === 'MULTI_FRAME')?.numbers).toEqual({ frames: 2 });
    expect(near((await rawRgb(card.png)).px(90, 120), [255, 0, 0])).toBe(true);
  });

  it('marks cards whose decoded pixels equal an earlier card (same art saved as PNG and lossless WebP)', async () => {
    const art = await busyArt(75, 105);
    const a = ok(await conformCard({ input: art, sourceName: 'a.png', recipe: recipe() }));
    const b = ok(await conformCard({ input: await sharp(art).webp({ lossless: true }).toBuffer(), sourceName: 'b.webp', recipe: recipe() }));
    const c = ok(await conformCard({ input: await busyArt(75, 106), sourceName: 'c.png', recipe: recipe() }));
    const cards = [a, b, c].map((x, i) => ({ path: ['a.png', 'b.webp', 'c.png'][i]!, sha256: x.info.sha256, findings: x.info.findings }));
    markDuplicates(cards);
    expect(cards.map((x) => x.findings.filter((f) => f.code === 'DUPLICATE_PIXELS').length)).toEqual([0, 1, 0]);
    expect(cards[1]!.findings.find((f) => f.code === 'DUPLICATE_PIXELS')!.message).toBe('Same pixels as "a.png".');
  });

  it('gives art saved with an opaque alpha channel the hash and pixels of the same art without one; real transparency differs', async () => {
    const art = await sharp(await busyArt(75, 105)).removeAlpha().png().toBuffer();
    const withAlpha = await sharp(art).ensureAlpha(1).png().toBuffer();
    const seeThrough = await sharp(art).ensureAlpha(0.5).png().toBuffer();
    expect((await sharp(art).metadata()).hasAlpha).toBe(false);
    expect((await sharp(withAlpha).metadata()).hasAlpha).toBe(true);
    const [plain, opaqueAlpha, transparent] = await Promise.all(
      [art, withAlpha, seeThrough].map(async (input, i) => ok(await conformCard({ input, sourceName: `${i}.png`, recipe: recipe() }))),
    );
    expect(opaqueAlpha.info.sha256).toBe(plain.info.sha256);
    expect(opaqueAlpha.png.equals(plain.png)).toBe(true);
    expect(opaqueAlpha.info.findings.map((f) => f.code)).toEqual(plain.info.findings.map((f) => f.code));
    expect(transparent.info.sha256).not.toBe(plain.info.sha256);
    expect(transparent.info.findings.map((f) => f.code)).toContain('TRANSPARENCY_FLATTENED');
  });

  it('turns unreadable files into error findings, never a crash', async () => {
    const good = await busyArt(75, 105);
    const cases: Array<[Buffer, string, string]> = [
      [Buffer.from('definitely not an image'), 'junk.png', 'NOT_AN_IMAGE'],
      [good.subarray(0, Math.floor(good.length * 0.6)), 'cut.png', 'TRUNCATED'],
      [await sharp(good).jpeg().toBuffer(), 'liar.png', 'EXTENSION_MISMATCH'],
      [await sharp(good).gif().toBuffer(), 'anim.gif', 'NOT_AN_IMAGE'],
    ];
    for (const [input, name, code] of cases) {
      const r = await conformCard({ input, sourceName: name, recipe: recipe() });
      expect(r.png, name).toBeNull();
      expect(r.info.findings.map((f) => `${f.code}:${f.severity}`), name).toEqual([`${code}:error`]);
    }
  });
});
