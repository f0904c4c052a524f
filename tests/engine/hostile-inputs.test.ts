// Hostile inputs the archive and conform tests do not cover yet (issue 6): names that collide after
// normalisation or case folding, legacy-encoded (CP437) names, files of another kind renamed as
// images, animated and multi-frame files, a pixel bomb caught from the header before decoding, and
// recipes and manifests with impossible values. Every case: a stable code or a per-card finding, and
// nothing written outside the output folder.
import { mkdtemp, readdir, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { crc32, deflateSync } from 'node:zlib';
import sharp from 'sharp';
import { beforeAll, describe, expect, it } from 'vitest';
import { openArtSet, readEntry } from '../../jobs/engine/archive.ts';
import { conformCard } from '../../jobs/engine/conform.ts';
import { runEngine } from '../../jobs/engine/run.ts';
import { BleedwrightError } from '../../shared/errors.ts';
import { parseRecipe } from '../../shared/recipe.ts';
import { makeZip, solidPng } from './helpers.ts';

let dir: string;
let png: Buffer;
let png2: Buffer;
beforeAll(async () => {
  dir = await mkdtemp(path.join(tmpdir(), 'bw-hostile-'));
  png = await solidPng(30, 42, '#884422');
  png2 = await solidPng(30, 42, '#224488');
});

async function zipFile(data: Buffer): Promise<string> {
  const file = path.join(dir, `z-${Math.random().toString(36).slice(2)}.zip`);
  await writeFile(file, data);
  return file;
}

async function codeOf(promise: Promise<unknown>): Promise<string> {
  try {
    await promise;
  } catch (err) {
    expect(err).toBeInstanceOf(BleedwrightError);
    return (err as BleedwrightError).code;
  }
  return 'NO_ERROR';
}

/**
 * Clears the UTF-8 flag (general purpose bit 11, 0x800) in every local and central header, so the names
 * must be read as CP437 (PKWARE APPNOTE 4.4.4 and appendix D). Walks the structures, never searches bytes.
 */
function withoutUtf8Flag(zip: Buffer): Buffer {
  const out = Buffer.from(zip);
  const end = out.length - 22;
  expect(out.readUInt32LE(end)).toBe(0x06054b50);
  const count = out.readUInt16LE(end + 10);
  let central = out.readUInt32LE(end + 16);
  for (let i = 0; i < count; i++) {
    expect(out.readUInt32LE(central)).toBe(0x02014b50);
    out.writeUInt16LE(out.readUInt16LE(central + 8) & ~0x800, central + 8);
    const local = out.readUInt32LE(central + 42);
    expect(out.readUInt32LE(local)).toBe(0x04034b50);
    out.writeUInt16LE(out.readUInt16LE(local + 6) & ~0x800, local + 6);
    central += 46 + out.readUInt16LE(central + 28) + out.readUInt16LE(central + 30) + out.readUInt16LE(central + 32);
  }
  return out;
}

describe('entry names', () => {
  it('reads names without the UTF-8 flag as CP437 (PKWARE APPNOTE appendix D)', async () => {
    // 0x81 is ü and 0x82 is é in CP437; as UTF-8 these bytes are not even valid.
    const name = Buffer.from([...Buffer.from('fl'), 0x81, ...Buffer.from('gel-'), 0x82, 0x74, 0x82, ...Buffer.from('.png')]);
    const raw = makeZipRawNames([{ name, data: png2 }, { name: Buffer.from('plain.png'), data: png }]);
    const set = await openArtSet(await zipFile(raw));
    expect(set.entries.map((e) => e.path).sort()).toEqual(['flügel-été.png', 'plain.png']);
    expect((await readEntry(set, 'flügel-été.png')).equals(png2)).toBe(true);
    // UTF-8 bytes with the flag set read as UTF-8.
    const utf8 = await openArtSet(await zipFile(makeZipRawNames([{ name: Buffer.from('flügel.png'), data: png }], true)));
    expect(utf8.entries.map((e) => e.path)).toEqual(['flügel.png']);
    // The same UTF-8 bytes without the flag are CP437 by the rule, so they read as other letters.
    const legacy = await openArtSet(await zipFile(withoutUtf8Flag(makeZip([{ name: 'flügel.png', data: png }]))));
    expect(legacy.entries.map((e) => e.path)).toEqual(['fl├╝gel.png']);
  });

  it('refuses a CP437 name that still escapes, and a NUL hidden in a name', async () => {
    const escape = makeZipRawNames([{ name: Buffer.from([0x2e, 0x2e, 0x2f, 0x82, 0x2e, 0x70, 0x6e, 0x67]), data: png }]);
    expect(await codeOf(openArtSet(await zipFile(escape)))).toBe('ARCHIVE_PATH');
    const nul = makeZipRawNames([{ name: Buffer.from('ok.png\0../../x.png'), data: png }]);
    expect(await codeOf(openArtSet(await zipFile(nul)))).toBe('ARCHIVE_PATH');
  });

  it('refuses a sibling folder sharing the prefix and a drive letter in lower case', async () => {
    for (const name of ['cards/../../cards2/x.png', 'c:evil.png', 'd:/x.png']) {
      expect(await codeOf(openArtSet(await zipFile(makeZip([{ name: 'ok.png', data: png }, { name, data: png }])))), name).toBe('ARCHIVE_PATH');
    }
  });

  it('keeps one entry when two names normalise to the same path, and says so', async () => {
    const set = await openArtSet(await zipFile(makeZip([{ name: 'a.png', data: png }, { name: './a.png', data: png2 }, { name: 'x/../a.png', data: png2 }])));
    expect(set.entries.map((e) => e.path)).toEqual(['a.png']);
    expect((await readEntry(set, 'a.png')).equals(png)).toBe(true);
    expect(set.skipped).toHaveLength(2);
    expect(set.skipped.every((s) => s.path === 'a.png' && /appears twice/.test(s.reason))).toBe(true);
  });

  it('names that differ only by letter case or Unicode form give outputs that never collide on a case-insensitive disk', async () => {
    const nfc = 'caf\u00e9.png';
    const nfd = 'cafe\u0301.png';
    const zip = await zipFile(makeZip([{ name: 'Ember.png', data: png }, { name: 'ember.png', data: png2 }, { name: nfc, data: png }, { name: nfd, data: png2 }]));
    const out = path.join(dir, `out-${Math.random().toString(36).slice(2)}`);
    const recipe = parseRecipe({ name: 'Case deck', dpi: 72, outputs: { singles: 'png', pdf: false, sheets: null, proof: false } });
    const result = await runEngine({ source: zip, recipe, outDir: out, cacheDir: null });
    expect(result.report.totals.cards).toBe(4);
    const singles = await readdir(path.join(out, 'cards'));
    expect(singles).toHaveLength(4);
    // A case-insensitive, normalising disk (the common desktop default) folds both ways.
    const folded = new Set(singles.map((n) => n.normalize('NFC').toLowerCase()));
    expect(folded.size).toBe(4);
  });
});

describe('zip bomb totals', () => {
  it('counts the total unpacked bytes before unpacking (declared sizes) and while unpacking (real bytes)', async () => {
    const zeros = Buffer.alloc(3 * 1024 * 1024);
    const limits = { maxTotalBytes: 4 * 1024 * 1024, maxEntryBytes: 100 * 1024 * 1024, ratioFloorBytes: 1024 * 1024 * 1024 };
    const honest = await zipFile(makeZip([{ name: 'a.png', data: zeros, deflate: true }, { name: 'b.png', data: zeros, deflate: true }]));
    expect(await codeOf(openArtSet(honest, limits))).toBe('ARCHIVE_TOO_LARGE');
    // The same two entries claiming 10 bytes each pass the central directory; the second read trips the total.
    const liar = await zipFile(makeZip([{ name: 'a.png', data: zeros, deflate: true, declaredSize: 10 }, { name: 'b.png', data: zeros, deflate: true, declaredSize: 10 }]));
    const set = await openArtSet(liar, limits);
    expect((await readEntry(set, 'a.png')).length).toBe(zeros.length);
    expect(await codeOf(readEntry(set, 'b.png'))).toBe('ARCHIVE_TOO_LARGE');
  });
});

describe('files that are not what their name says', () => {
  const recipe = parseRecipe({ name: 'Renamed deck', dpi: 72 });
  it('SVG, PDF and HTML renamed as images are NOT_AN_IMAGE errors, never decoded', async () => {
    const cases: Array<[string, Buffer]> = [
      ['vector.png', Buffer.from('<svg xmlns="http://www.w3.org/2000/svg" width="30" height="42"><rect width="30" height="42" fill="red"/></svg>')],
      ['vector.jpg', Buffer.from('<?xml version="1.0"?><svg xmlns="http://www.w3.org/2000/svg" width="9000" height="9000"/>')],
      ['paper.png', Buffer.from('%PDF-1.4\n1 0 obj<</Type/Catalog>>endobj\ntrailer<</Root 1 0 R>>\n%%EOF\n')],
      ['page.webp', Buffer.from('<!doctype html><html><body><img src=x onerror="alert(1)"></body></html>')],
      ['page.tif', Buffer.from('<html><script>alert(1)</script></html>')],
    ];
    for (const [name, input] of cases) {
      const r = await conformCard({ input, sourceName: name, recipe });
      expect(r.png, name).toBeNull();
      expect(r.info.findings.map((f) => `${f.code}:${f.severity}`), name).toEqual(['NOT_AN_IMAGE:error']);
    }
  });

  it('a PNG saved as .webp is an EXTENSION_MISMATCH naming the real format', async () => {
    const r = await conformCard({ input: png, sourceName: 'card.webp', recipe });
    expect(r.png).toBeNull();
    expect(r.info.findings[0]).toMatchObject({ code: 'EXTENSION_MISMATCH', severity: 'error', message: 'The file is named .webp but is really PNG.' });
  });

  it('an animated WebP uses its first frame and says how many there were; an animated GIF renamed .png is refused', async () => {
    const anim = await sharp([png, png2], { join: { animated: true } }).webp({ lossless: true }).toBuffer();
    const r = await conformCard({ input: anim, sourceName: 'anim.webp', recipe });
    expect(r.png).not.toBeNull();
    expect(r.info.findings.find((f) => f.code === 'MULTI_FRAME')?.numbers).toEqual({ frames: 2 });
    const { data } = await sharp(r.png!).raw().toBuffer({ resolveWithObject: true });
    const [cx, cy] = [Math.floor((await sharp(r.png!).metadata()).width! / 2), Math.floor((await sharp(r.png!).metadata()).height! / 2)];
    const w = (await sharp(r.png!).metadata()).width!;
    const o = (cy * w + cx) * 3;
    expect([data[o], data[o + 1], data[o + 2]]).toEqual([0x88, 0x44, 0x22]); // the first frame's colour

    const gif = await sharp([png, png2], { join: { animated: true } }).gif().toBuffer();
    const g = await conformCard({ input: gif, sourceName: 'moving.png', recipe });
    expect(g.png).toBeNull();
    expect(g.info.findings.map((f) => f.code)).toEqual(['NOT_AN_IMAGE']);
  });

  it('a pixel bomb (a 74-byte PNG whose header claims 40000 x 40000) is refused from the header, before decoding', async () => {
    const ihdr = Buffer.alloc(13);
    ihdr.writeUInt32BE(40_000, 0);
    ihdr.writeUInt32BE(40_000, 4);
    ihdr[8] = 8; // bit depth
    ihdr[9] = 2; // colour type RGB (PNG specification 11.2.2)
    const bomb = Buffer.concat([Buffer.from([137, 80, 78, 71, 13, 10, 26, 10]), pngChunk('IHDR', ihdr), pngChunk('IDAT', deflateSync(Buffer.alloc(1000))), pngChunk('IEND', Buffer.alloc(0))]);
    const started = performance.now();
    const r = await conformCard({ input: bomb, sourceName: 'bomb.png', recipe });
    // Decoding 1600 megapixels would take minutes and 4.8 GB; reading the header takes milliseconds.
    expect(performance.now() - started).toBeLessThan(2000);
    expect(r.png).toBeNull();
    expect(r.info.findings[0]).toMatchObject({ code: 'TOO_MANY_PIXELS', severity: 'error', numbers: { megapixels: 1600, limitMegapixels: 100 } });
    expect(r.info.sourcePx).toEqual({ w: 40_000, h: 40_000 });
  });
});

describe('impossible recipe and manifest values', () => {
  const invalid = (input: unknown): string => {
    try {
      parseRecipe(input);
    } catch (err) {
      return (err as BleedwrightError).code;
    }
    return 'NO_ERROR';
  };

  it('refuses negative bleed, zero DPI, huge trim, zero-size trim and a sheet multiple of 0 with RECIPE_INVALID', () => {
    expect(invalid({ name: 'x', bleed: { size: -1, unit: 'mm' } })).toBe('RECIPE_INVALID');
    expect(invalid({ name: 'x', dpi: 0 })).toBe('RECIPE_INVALID');
    expect(invalid({ name: 'x', dpi: -300 })).toBe('RECIPE_INVALID');
    expect(invalid({ name: 'x', trim: { width: 5000, height: 88.9, unit: 'mm' } })).toBe('RECIPE_INVALID');
    expect(invalid({ name: 'x', trim: { width: 0, height: 88.9, unit: 'mm' } })).toBe('RECIPE_INVALID');
    expect(invalid({ name: 'x', sheet: { multiple: 0, pad: 'blank' } })).toBe('RECIPE_INVALID');
    expect(invalid({ name: 'x', dpi: Number.NaN })).toBe('RECIPE_INVALID');
    expect(invalid('{"name": "x", "dpi": 1e309}')).toBe('RECIPE_INVALID');
    expect(invalid({ name: 'x' })).toBe('NO_ERROR');
  });

  it('a manifest with copies 0 leaves the card out; 10000 copies, missing and extra columns get clear answers', async () => {
    const open = async (csv: string) => openArtSet(await zipFile(makeZip([{ name: 'a.png', data: png }, { name: 'b.png', data: png2 }, { name: 'manifest.csv', data: Buffer.from(csv) }])));
    const message = async (csv: string) => {
      try {
        await open(csv);
      } catch (err) {
        return (err as BleedwrightError).toLine();
      }
      return 'NO_ERROR';
    };
    expect(await message('file,copies\na.png,10000\n')).toBe('MANIFEST_INVALID: manifest.csv row 2: copies "10000" must be a whole number from 0 to 1000');
    expect(await message('copies,title\n2,Ember\n')).toBe('MANIFEST_INVALID: manifest.csv needs a "file" column (columns: file, copies, back, title)');
    expect(await message('file,copies\na.png,1.5\n')).toMatch(/^MANIFEST_INVALID: manifest.csv row 2: copies "1.5"/);
    expect(await message('file,copies\n../etc/passwd,1\n')).toMatch(/^MANIFEST_INVALID: manifest.csv row 2: file "..\/etc\/passwd" is not in the art set/);
    // Extra columns are ignored; a short row takes the defaults.
    const extra = await open('file,copies,colour,notes\na.png,2,red,first\nb.png\n');
    expect(extra.manifest!.map((r) => [r.file, r.copies])).toEqual([
      ['a.png', 2],
      ['b.png', 1],
    ]);
    const zero = await open('file,copies\na.png,0\nb.png,3\n');
    const out = path.join(dir, `zero-${Math.random().toString(36).slice(2)}`);
    const recipe = parseRecipe({ name: 'Zero deck', dpi: 72, order: 'manifest', outputs: { singles: 'png', pdf: false, sheets: null, proof: false } });
    const result = await runEngine({ source: zero.source, recipe, outDir: out, cacheDir: null });
    const singles = await readdir(path.join(out, 'cards'));
    expect(singles).toHaveLength(3);
    expect(singles.every((n) => n.startsWith('b'))).toBe(true);
    expect(result.report.cards.filter((c) => c.source === 'a.png').map((c) => [c.copies, c.outputs])).toEqual([[0, []]]);
  });
});

function pngChunk(type: string, data: Buffer): Buffer {
  const len = Buffer.alloc(4);
  len.writeUInt32BE(data.length);
  const body = Buffer.concat([Buffer.from(type, 'latin1'), data]);
  const crc = Buffer.alloc(4);
  crc.writeUInt32BE(crc32(body));
  return Buffer.concat([len, body, crc]);
}

/** A stored (uncompressed) zip whose names are the given raw bytes (PKWARE APPNOTE 4.3). */
function makeZipRawNames(entries: Array<{ name: Buffer; data: Buffer }>, utf8Flag = false): Buffer {
  const locals: Buffer[] = [];
  const centrals: Buffer[] = [];
  let offset = 0;
  const flags = utf8Flag ? 0x800 : 0;
  for (const e of entries) {
    const crc = crc32(e.data);
    const local = Buffer.alloc(30);
    local.writeUInt32LE(0x04034b50, 0);
    local.writeUInt16LE(20, 4);
    local.writeUInt16LE(flags, 6);
    local.writeUInt32LE(crc, 14);
    local.writeUInt32LE(e.data.length, 18);
    local.writeUInt32LE(e.data.length, 22);
    local.writeUInt16LE(e.name.length, 26);
    locals.push(local, e.name, e.data);
    const central = Buffer.alloc(46);
    central.writeUInt32LE(0x02014b50, 0);
    central.writeUInt16LE(20, 4);
    central.writeUInt16LE(20, 6);
    central.writeUInt16LE(flags, 8);
    central.writeUInt32LE(crc, 16);
    central.writeUInt32LE(e.data.length, 20);
    central.writeUInt32LE(e.data.length, 24);
    central.writeUInt16LE(e.name.length, 28);
    central.writeUInt32LE(offset, 42);
    centrals.push(central, e.name);
    offset += 30 + e.name.length + e.data.length;
  }
  const cd = Buffer.concat(centrals);
  const end = Buffer.alloc(22);
  end.writeUInt32LE(0x06054b50, 0);
  end.writeUInt16LE(entries.length, 8);
  end.writeUInt16LE(entries.length, 10);
  end.writeUInt32LE(cd.length, 12);
  end.writeUInt32LE(offset, 16);
  return Buffer.concat([...locals, cd, end]);
}
