// Conforming one card: decode any supported image, orient, turn, fit, build the bleed, flatten, and
// encode an 8-bit sRGB PNG with its resolution written in. Callable alone (one render job per card).
import { createHash } from 'node:crypto';
import path from 'node:path';
import picomatch from 'picomatch';
import sharp, { type Metadata } from 'sharp';
import { PREFLIGHT_CONFIG, makeFinding, type Finding } from '../../shared/findings.ts';
import { recipeGeometry, type Recipe } from '../../shared/recipe.ts';
import { detectSourceKind, effectiveDpi, preflight } from './preflight.ts';

export type CardTurn = 'clockwise' | 'counterclockwise' | 'none';

export type CardInfo = {
  /** Source pixels as stored (before EXIF orientation). */
  sourcePx: { w: number; h: number };
  format: string;
  effectiveDpi: number;
  turn: CardTurn;
  fill: 'solid' | 'edge' | 'mirror';
  /** Colour used for a solid fill and for flattening transparency. */
  fillColor: string;
  sourceKind: 'trim' | 'bleed';
  /** sha256 of the decoded, oriented pixels, RGB (RGBA for art with transparency): finds the same art saved twice. */
  sha256: string;
  findings: Finding[];
};

/** A card that could not be conformed: error findings only, no image. */
export type RejectedCard = { png: null; info: { sourcePx: { w: number; h: number } | null; format: string | null; findings: Finding[] } };
export type ConformedCard = { png: Buffer; info: CardInfo };
export type ConformResult = ConformedCard | RejectedCard;

const FORMAT_BY_EXT: Record<string, string> = { '.png': 'png', '.jpg': 'jpeg', '.jpeg': 'jpeg', '.webp': 'webp', '.tif': 'tiff', '.tiff': 'tiff' };
const ACCEPTED_FORMATS = new Set(['png', 'jpeg', 'webp', 'tiff']);

type Raw = { data: Buffer; w: number; h: number; channels: number };

function reject(findings: Finding[], sourcePx: { w: number; h: number } | null = null, format: string | null = null): RejectedCard {
  return { png: null, info: { sourcePx, format, findings } };
}

function decodeFailure(err: unknown): Finding {
  const reason = ((err as Error).message || 'unknown error').split('\n')[0]!.replace(/\.$/, '');
  if (/truncat|premature end|unexpected end|read error|short|incomplete|not enough/i.test(reason)) return makeFinding('TRUNCATED', {}, { reason });
  if (/unsupported image format|input buffer contains unsupported/i.test(reason)) return makeFinding('NOT_AN_IMAGE');
  return makeFinding('UNREADABLE', {}, { reason });
}

/** Picks the turn for art whose orientation differs from the card's: override, then rules, then recipe. */
export function chooseTurn(recipe: Pick<Recipe, 'turn' | 'turnRules'>, sourceName: string, override?: Recipe['turn']): Recipe['turn'] {
  if (override) return override;
  for (const rule of recipe.turnRules) {
    if (picomatch.isMatch(sourceName, rule.match, { nocase: true, basename: !rule.match.includes('/') })) return rule.turn;
  }
  return recipe.turn;
}

/** One colour within tolerance around the whole outer ring? Returns it as [r,g,b] or null. */
export function solidRingColor(img: Raw, tolerance: number = PREFLIGHT_CONFIG.solidRingTolerance): [number, number, number] | null {
  const { data, w, h, channels } = img;
  const min = [255, 255, 255];
  const max = [0, 0, 0];
  const sum = [0, 0, 0];
  let n = 0;
  const visit = (x: number, y: number) => {
    const o = (y * w + x) * channels;
    for (let c = 0; c < 3; c++) {
      const v = data[o + c]!;
      if (v < min[c]!) min[c] = v;
      if (v > max[c]!) max[c] = v;
      sum[c]! += v;
    }
    n++;
  };
  for (let x = 0; x < w; x++) {
    visit(x, 0);
    visit(x, h - 1);
  }
  for (let y = 1; y < h - 1; y++) {
    visit(0, y);
    visit(w - 1, y);
  }
  if ([0, 1, 2].some((c) => max[c]! - min[c]! > tolerance)) return null;
  return [0, 1, 2].map((c) => Math.round(sum[c]! / n)) as [number, number, number];
}

/** True when every alpha byte of RGBA `data` is 255. */
function opaque(data: Buffer): boolean {
  for (let i = 3; i < data.length; i += 4) if (data[i]! < 255) return false;
  return true;
}

/** RGB bytes of RGBA `data`. */
function dropAlpha(data: Buffer): Buffer {
  const rgb = Buffer.allocUnsafe((data.length / 4) * 3);
  for (let i = 0, o = 0; i < data.length; i += 4, o += 3) {
    rgb[o] = data[i]!;
    rgb[o + 1] = data[i + 1]!;
    rgb[o + 2] = data[i + 2]!;
  }
  return rgb;
}

function hexToRgb(hex: string): [number, number, number] {
  return [1, 3, 5].map((i) => parseInt(hex.slice(i, i + 2), 16)) as [number, number, number];
}

function rgbToHex(rgb: readonly number[]): string {
  return `#${rgb.map((v) => v.toString(16).padStart(2, '0')).join('')}`;
}

// PNG settings chosen on purpose (measured on the 200 bench cards, 825 x 1125 painted card art with a
// frame-coloured bleed, sharp 0.35 / zlib-ng, CPU of the encode alone): adaptive filtering picks the
// best filter per row and halves the file against no filtering (0.93 MB against 1.7 MB). Compression
// level 4 is the cheapest level within 10% of the ImageMagick pipeline's files (932.9 KB a card,
// 1.091 x its 855.5 KB): level 3 is 942.9 KB (1.102 x) for 68 ms against 82 ms, levels 5 and 6 save
// 0.1% for 85-87 ms, and level 7 (zlib-ng's lazy matching) reaches 850 KB but takes 144 ms. No palette
// and no interlacing, so the file stays 8-bit RGB colour type 2, non-interlaced, whose IDAT data the
// PDF writer copies as-is.
export const PNG_OPTIONS = { compressionLevel: 4, adaptiveFiltering: true, palette: false, progressive: false } as const;

export async function conformCard(opts: {
  input: Buffer;
  sourceName: string;
  recipe: Recipe;
  turnOverride?: Recipe['turn'];
}): Promise<ConformResult> {
  const { input, sourceName, recipe } = opts;
  const geo = recipeGeometry(recipe);

  // Header first: format, size and frames, before any pixel is decoded.
  let meta: Metadata;
  try {
    meta = await sharp(input, { limitInputPixels: false }).metadata();
  } catch (err) {
    return reject([decodeFailure(err)]);
  }
  const format = meta.format ?? 'unknown';
  const sourcePx = { w: meta.width ?? 0, h: meta.height ?? 0 };
  if (!ACCEPTED_FORMATS.has(format)) return reject([makeFinding('NOT_AN_IMAGE')], sourcePx, format);
  const ext = path.extname(sourceName).toLowerCase();
  const expected = FORMAT_BY_EXT[ext];
  if (expected && expected !== format) {
    return reject([makeFinding('EXTENSION_MISMATCH', {}, { ext: ext.slice(1), format: format.toUpperCase() })], sourcePx, format);
  }
  const pixels = sourcePx.w * sourcePx.h;
  if (pixels > PREFLIGHT_CONFIG.maxInputPixels) {
    return reject(
      [makeFinding('TOO_MANY_PIXELS', { megapixels: Math.round(pixels / 1e5) / 10, limitMegapixels: PREFLIGHT_CONFIG.maxInputPixels / 1e6 })],
      sourcePx,
      format,
    );
  }
  const convertedFrom: string[] = [];
  if (meta.space === 'cmyk') convertedFrom.push('CMYK');
  if (meta.depth && meta.depth !== 'uchar' && meta.depth !== 'char') convertedFrom.push('16-bit');
  if (meta.space === 'b-w' || meta.space === 'grey16' || meta.channels === 1 || meta.channels === 2) convertedFrom.push('grayscale');

  // Decode the first frame only, oriented by EXIF, as 8-bit sRGB: RGB when the file has no alpha channel
  // (most art: a quarter fewer bytes to decode into, hash and turn), else RGBA. failOn 'error' also fails
  // on truncated data, so a cut-short file becomes a finding instead of a half-grey card.
  let decoded: Raw;
  try {
    const decoder = sharp(input, { limitInputPixels: PREFLIGHT_CONFIG.maxInputPixels, failOn: 'error', pages: 1 }).rotate().toColourspace('srgb');
    if (meta.hasAlpha === false) decoder.removeAlpha();
    else decoder.ensureAlpha();
    const { data, info } = await decoder.raw({ depth: 'uchar' }).toBuffer({ resolveWithObject: true });
    decoded = { data, w: info.width, h: info.height, channels: info.channels };
  } catch (err) {
    return reject([decodeFailure(err)], sourcePx, format);
  }
  // An alpha channel that is opaque everywhere is dropped: the card is the same as art saved without one.
  const hadAlpha = decoded.channels === 4 && !opaque(decoded.data);
  if (decoded.channels === 4 && !hadAlpha) decoded = { ...decoded, data: dropAlpha(decoded.data), channels: 3 };
  // The same pixels give the same hash whatever file they came from (RGB; RGBA only for art with transparency).
  const sha256 = createHash('sha256').update(`${decoded.w}x${decoded.h}:${hadAlpha ? 'rgba:' : ''}`).update(decoded.data).digest('hex');

  // Turn: art whose orientation differs from the card's (landscape art on a portrait card).
  const cardLandscape = geo.trimPx.w > geo.trimPx.h;
  const artLandscape = decoded.w > decoded.h;
  const differs = geo.trimPx.w !== geo.trimPx.h && decoded.w !== decoded.h && artLandscape !== cardLandscape;
  const turnSetting = differs ? chooseTurn(recipe, sourceName, opts.turnOverride) : 'keep';
  const turn: CardTurn = turnSetting === 'keep' ? 'none' : turnSetting;
  const turned = turn === 'none' ? { w: decoded.w, h: decoded.h } : { w: decoded.h, h: decoded.w };

  const sourceKind = recipe.source === 'auto' ? detectSourceKind(turned, geo.trimPx, geo.pagePx) : recipe.source;
  const target = sourceKind === 'bleed' ? geo.pagePx : geo.trimPx;

  // Flatten transparency onto the solid fill colour, or white for the other fills.
  const flattenColor = recipe.fill.mode === 'solid' ? recipe.fill.color : '#ffffff';
  const angle = turn === 'clockwise' ? 90 : turn === 'counterclockwise' ? 270 : 0;
  // Opaque art that is already the target size (the common case) needs no flatten and no resize: the
  // turn is done in the final pipeline, which saves a full pass over the pixels. Turning maps the outer
  // ring onto the outer ring, so the fill colour can be read from the decoded pixels.
  const direct = !hadAlpha && turned.w === target.w && turned.h === target.h;
  let fitted: Raw;
  if (direct) {
    fitted = decoded;
  } else {
    const fitKind = recipe.fit === 'cover' ? 'cover' : recipe.fit === 'contain' ? 'inside' : 'fill';
    const fittedOut = await sharp(decoded.data, { raw: { width: decoded.w, height: decoded.h, channels: decoded.channels as 3 | 4 }, limitInputPixels: false })
      .flatten({ background: flattenColor })
      .rotate(angle)
      .resize(target.w, target.h, { fit: fitKind, position: 'centre', kernel: 'lanczos3' })
      .removeAlpha()
      .raw()
      .toBuffer({ resolveWithObject: true });
    fitted = { data: fittedOut.data, w: fittedOut.info.width, h: fittedOut.info.height, channels: fittedOut.info.channels };
  }
  const fittedPx = direct ? turned : { w: fitted.w, h: fitted.h };

  // Bleed (and any contain padding) is built around the fitted art by the fill mode.
  let fill: CardInfo['fill'];
  let fillRgb: [number, number, number] = hexToRgb(flattenColor);
  if (recipe.fill.mode === 'auto') {
    const ring = solidRingColor(fitted);
    fill = ring ? 'solid' : 'mirror';
    if (ring) fillRgb = ring;
  } else {
    fill = recipe.fill.mode;
  }
  const padW = geo.pagePx.w - fittedPx.w;
  const padH = geo.pagePx.h - fittedPx.h;
  const left = Math.floor(padW / 2);
  const top = Math.floor(padH / 2);
  // Both paths hand over RGB: direct art has no alpha left after decoding, the other path removed it.
  const pipeline = sharp(fitted.data, { raw: { width: fitted.w, height: fitted.h, channels: 3 }, limitInputPixels: false });
  if (direct) pipeline.rotate(angle);
  if (padW > 0 || padH > 0) {
    pipeline.extend({
      left,
      right: padW - left,
      top,
      bottom: padH - top,
      extendWith: fill === 'solid' ? 'background' : fill === 'edge' ? 'copy' : 'mirror',
      background: { r: fillRgb[0], g: fillRgb[1], b: fillRgb[2], alpha: 1 },
    });
  }
  const png = await pipeline.toColourspace('srgb').png(PNG_OPTIONS).withMetadata({ density: recipe.dpi }).toBuffer();

  const findings = preflight({
    src: turned,
    target,
    fit: recipe.fit,
    dpi: recipe.dpi,
    sourceKind,
    hadAlpha,
    convertedFrom,
    frames: meta.pages ?? 1,
    turn,
  });
  return {
    png,
    info: {
      sourcePx,
      format,
      effectiveDpi: effectiveDpi(turned, target, recipe.fit, recipe.dpi),
      turn,
      fill,
      fillColor: rgbToHex(fillRgb),
      sourceKind,
      sha256,
      findings,
    },
  };
}

/** Re-encodes a conformed PNG as another singles format, with the resolution written in. */
export async function encodeSingle(png: Buffer, format: 'png' | 'tiff' | 'jpeg', dpi: number): Promise<Buffer> {
  if (format === 'png') return png;
  const img = sharp(png).withMetadata({ density: dpi });
  // TIFF: lossless LZW (TIFF 6.0 XResolution/YResolution + ResolutionUnit inch via density).
  // JPEG: quality 95 without chroma subsampling keeps text edges clean; JFIF density in DPI.
  return format === 'tiff' ? img.tiff({ compression: 'lzw' }).toBuffer() : img.jpeg({ quality: 95, chromaSubsampling: '4:4:4' }).toBuffer();
}
