// Generates the sample art set of "Cinderbrook Couriers", an invented card game about couriers in a
// river town. All art is drawn here from SVG (shapes, gradients, text); nothing comes from elsewhere.
// Writes samples/cinderbrook/ (cards, back, manifest.csv) and samples/cinderbrook.zip (the same set
// under one top folder, plus the OS junk desktop archivers add, to show it being skipped).
// Run: npx tsx samples/generate.ts
import { mkdir, rm, writeFile } from 'node:fs/promises';
import { createWriteStream } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import sharp from 'sharp';
import yazl from 'yazl';

const here = path.dirname(fileURLToPath(import.meta.url));
const SET = 'cinderbrook';

type CardSpec = {
  file: string;
  code: string;
  title: string;
  hue: number;
  /** Pixel size as drawn; 750 x 1050 is poker trim at 300 DPI. */
  w: number;
  h: number;
  shape: 'sun' | 'bridge' | 'wheel' | 'lantern' | 'wave' | 'key';
  copies: number;
  /** Rounded transparent corners (shows transparency being flattened). */
  transparentCorners?: boolean;
  /** A plain border all round (shows fill auto choosing a solid bleed). */
  plainBorder?: boolean;
  /** Drawn with the bleed already included (825 x 1125). */
  withBleed?: boolean;
  gray?: boolean;
};

const CARDS: CardSpec[] = [
  { file: 'cb-01-ferry-runner.png', code: 'CB-01', title: 'Ferry Runner', hue: 200, w: 750, h: 1050, shape: 'wave', copies: 1 },
  { file: 'cb-02-lamplighter.jpg', code: 'CB-02', title: 'Lamplighter', hue: 40, w: 750, h: 1050, shape: 'lantern', copies: 2 },
  { file: 'cb-03-kettle-bridge.png', code: 'CB-03', title: 'Kettle Bridge', hue: 15, w: 1050, h: 750, shape: 'bridge', copies: 1 },
  { file: 'cb-04-mapmakers-loft.webp', code: 'CB-04', title: "Mapmaker's Loft", hue: 95, w: 1050, h: 750, shape: 'key', copies: 1 },
  { file: 'cb-05-owl-post.png', code: 'CB-05', title: 'Owl Post', hue: 280, w: 300, h: 420, shape: 'sun', copies: 2 },
  { file: 'cb-06-cinder-market.png', code: 'CB-06', title: 'Cinder Market', hue: 5, w: 825, h: 1125, shape: 'sun', copies: 1, withBleed: true },
  { file: 'cb-07-rope-swing.png', code: 'CB-07', title: 'Rope Swing', hue: 130, w: 750, h: 1050, shape: 'wheel', copies: 2, transparentCorners: true },
  { file: 'cb-08-fog-lantern.tif', code: 'CB-08', title: 'Fog Lantern', hue: 220, w: 750, h: 1050, shape: 'lantern', copies: 1 },
  { file: 'cb-09-river-toll.png', code: 'CB-09', title: 'River Toll', hue: 175, w: 800, h: 1000, shape: 'key', copies: 1 },
  { file: 'cb-10-night-shift.png', code: 'CB-10', title: 'Night Shift', hue: 250, w: 1050, h: 750, shape: 'wave', copies: 1 },
  { file: 'cb-11-spare-wheel.png', code: 'CB-11', title: 'Spare Wheel', hue: 60, w: 750, h: 1050, shape: 'wheel', copies: 2, plainBorder: true },
  { file: 'cb-12-courier-oath.jpg', code: 'CB-12', title: 'Courier Oath', hue: 0, w: 750, h: 1050, shape: 'bridge', copies: 1, gray: true },
];

function shapeSvg(shape: CardSpec['shape'], cx: number, cy: number, r: number, hue: number): string {
  const light = `hsl(${(hue + 40) % 360},80%,75%)`;
  const dark = `hsl(${hue},60%,25%)`;
  switch (shape) {
    case 'sun':
      return `<circle cx="${cx}" cy="${cy}" r="${r}" fill="${light}"/>` +
        Array.from({ length: 12 }, (_, i) => {
          const a = (i * Math.PI) / 6;
          return `<line x1="${cx + Math.cos(a) * r * 1.15}" y1="${cy + Math.sin(a) * r * 1.15}" x2="${cx + Math.cos(a) * r * 1.5}" y2="${cy + Math.sin(a) * r * 1.5}" stroke="${light}" stroke-width="${r / 8}" stroke-linecap="round"/>`;
        }).join('');
    case 'bridge':
      return `<path d="M ${cx - r * 1.4} ${cy + r * 0.6} Q ${cx} ${cy - r * 1.2} ${cx + r * 1.4} ${cy + r * 0.6}" stroke="${light}" stroke-width="${r / 5}" fill="none"/>` +
        `<rect x="${cx - r * 1.5}" y="${cy + r * 0.55}" width="${r * 3}" height="${r / 6}" fill="${dark}"/>`;
    case 'wheel':
      return `<circle cx="${cx}" cy="${cy}" r="${r}" stroke="${light}" stroke-width="${r / 7}" fill="none"/>` +
        Array.from({ length: 8 }, (_, i) => {
          const a = (i * Math.PI) / 4;
          return `<line x1="${cx}" y1="${cy}" x2="${cx + Math.cos(a) * r}" y2="${cy + Math.sin(a) * r}" stroke="${light}" stroke-width="${r / 12}"/>`;
        }).join('');
    case 'lantern':
      return `<rect x="${cx - r * 0.5}" y="${cy - r * 0.8}" width="${r}" height="${r * 1.5}" rx="${r * 0.2}" fill="${light}" stroke="${dark}" stroke-width="${r / 10}"/>` +
        `<circle cx="${cx}" cy="${cy - r}" r="${r * 0.18}" fill="none" stroke="${dark}" stroke-width="${r / 14}"/>` +
        `<ellipse cx="${cx}" cy="${cy}" rx="${r * 0.2}" ry="${r * 0.35}" fill="hsl(45,100%,60%)"/>`;
    case 'wave':
      return Array.from({ length: 4 }, (_, i) => {
        const y = cy - r + i * r * 0.6;
        return `<path d="M ${cx - r * 1.5} ${y} q ${r * 0.375} ${-r * 0.3} ${r * 0.75} 0 t ${r * 0.75} 0 t ${r * 0.75} 0 t ${r * 0.75} 0" stroke="${light}" stroke-width="${r / 10}" fill="none"/>`;
      }).join('');
    case 'key':
      return `<circle cx="${cx - r * 0.6}" cy="${cy}" r="${r * 0.45}" fill="none" stroke="${light}" stroke-width="${r / 7}"/>` +
        `<rect x="${cx - r * 0.15}" y="${cy - r * 0.08}" width="${r * 1.3}" height="${r * 0.16}" fill="${light}"/>` +
        `<rect x="${cx + r * 0.8}" y="${cy}" width="${r * 0.14}" height="${r * 0.4}" fill="${light}"/>`;
  }
}

/** Card art as SVG. Landscape cards are laid out landscape: the title runs along the long edge. */
function cardSvg(c: CardSpec): string {
  const { w, h, hue } = c;
  const s = Math.min(w, h) / 750;
  const inset = c.withBleed ? 37.5 * s + 36 * s : 36 * s;
  const bg = c.plainBorder
    ? `<rect width="${w}" height="${h}" fill="hsl(${hue},55%,38%)"/><rect x="${inset}" y="${inset}" width="${w - 2 * inset}" height="${h - 2 * inset}" rx="${24 * s}" fill="url(#g)"/>`
    : `<rect width="${w}" height="${h}" fill="url(#g)"/>`;
  const corners = c.transparentCorners ? `rx="${60 * s}"` : '';
  const title = c.title.replace(/&/g, '&amp;').replace(/'/g, '&#39;');
  return `<svg xmlns="http://www.w3.org/2000/svg" width="${w}" height="${h}" viewBox="0 0 ${w} ${h}">
  <defs>
    <linearGradient id="g" x1="0" y1="0" x2="0.4" y2="1">
      <stop offset="0" stop-color="hsl(${hue},70%,55%)"/><stop offset="1" stop-color="hsl(${(hue + 50) % 360},65%,22%)"/>
    </linearGradient>
    <clipPath id="card"><rect width="${w}" height="${h}" ${corners}/></clipPath>
  </defs>
  <g clip-path="url(#card)">
    ${bg}
    ${shapeSvg(c.shape, w / 2, h * 0.52, Math.min(w, h) * 0.26, hue)}
    <rect x="${inset + 20 * s}" y="${inset + 20 * s}" width="${w - 2 * inset - 40 * s}" height="${96 * s}" rx="${16 * s}" fill="rgba(255,255,255,0.85)"/>
    <text x="${inset + 44 * s}" y="${inset + 86 * s}" font-family="sans-serif" font-weight="bold" font-size="${50 * s}" fill="hsl(${hue},60%,20%)">${title}</text>
    <circle cx="${w - inset - 70 * s}" cy="${inset + 68 * s}" r="${36 * s}" fill="hsl(${hue},60%,25%)"/>
    <text x="${w - inset - 70 * s}" y="${inset + 84 * s}" text-anchor="middle" font-family="sans-serif" font-weight="bold" font-size="${44 * s}" fill="#fff">${(c.code.charCodeAt(4) % 5) + 1}</text>
    <text x="${w / 2}" y="${h - inset - 40 * s}" text-anchor="middle" font-family="sans-serif" font-size="${30 * s}" fill="rgba(255,255,255,0.9)">${c.code} · Cinderbrook Couriers</text>
  </g>
</svg>`;
}

function backSvg(): string {
  const w = 750;
  const h = 1050;
  const dots = Array.from({ length: 60 }, (_, i) => `<circle cx="${(i % 6) * 125 + 62}" cy="${Math.floor(i / 6) * 105 + 52}" r="14" fill="hsl(25,70%,45%)"/>`).join('');
  return `<svg xmlns="http://www.w3.org/2000/svg" width="${w}" height="${h}">
  <rect width="${w}" height="${h}" fill="hsl(25,60%,22%)"/>${dots}
  <rect x="120" y="360" width="510" height="330" rx="40" fill="hsl(40,80%,88%)" stroke="hsl(25,60%,22%)" stroke-width="10"/>
  <text x="375" y="510" text-anchor="middle" font-family="serif" font-weight="bold" font-size="64" fill="hsl(25,60%,22%)">Cinderbrook</text>
  <text x="375" y="590" text-anchor="middle" font-family="serif" font-size="48" fill="hsl(25,60%,30%)">Couriers</text>
</svg>`;
}

async function render(c: CardSpec): Promise<Buffer> {
  let img = sharp(Buffer.from(cardSvg(c)));
  if (c.gray) img = img.toColourspace('b-w');
  const ext = path.extname(c.file);
  if (ext === '.jpg') return img.flatten({ background: '#ffffff' }).jpeg({ quality: 82 }).toBuffer();
  if (ext === '.webp') return img.webp({ quality: 85 }).toBuffer();
  if (ext === '.tif') return img.tiff({ compression: 'jpeg', quality: 85 }).toBuffer();
  return img.png({ compressionLevel: 9, palette: c.w < 500 }).toBuffer();
}

async function main(): Promise<void> {
  const dir = path.join(here, SET);
  await rm(dir, { recursive: true, force: true });
  await mkdir(dir, { recursive: true });
  const files: Array<{ name: string; data: Buffer }> = [];
  for (const c of CARDS) files.push({ name: c.file, data: await render(c) });
  files.push({ name: 'back.png', data: await sharp(Buffer.from(backSvg())).png({ compressionLevel: 9 }).toBuffer() });
  const manifest = ['file,copies,back,title', ...CARDS.map((c) => `${c.file},${c.copies},,"${c.title}"`)].join('\n');
  files.push({ name: 'manifest.csv', data: Buffer.from(`${manifest}\n`) });
  for (const f of files) await writeFile(path.join(dir, f.name), f.data);

  // The zip: one top folder (as desktop archivers make it) plus OS junk, which the engine skips.
  const zip = new yazl.ZipFile();
  const mtime = new Date(Date.UTC(2020, 0, 1));
  for (const f of files) zip.addBuffer(f.data, `${SET}/${f.name}`, { mtime });
  zip.addBuffer(Buffer.from('junk'), `__MACOSX/${SET}/._back.png`, { mtime });
  zip.addBuffer(Buffer.from('junk'), `${SET}/.DS_Store`, { mtime });
  zip.addBuffer(Buffer.from('junk'), `${SET}/Thumbs.db`, { mtime });
  zip.end();
  await new Promise<void>((resolve, reject) => {
    zip.outputStream.pipe(createWriteStream(path.join(here, `${SET}.zip`))).on('close', resolve).on('error', reject);
  });
  console.log(`wrote samples/${SET}/ (${files.length} files) and samples/${SET}.zip`);
}

await main();
