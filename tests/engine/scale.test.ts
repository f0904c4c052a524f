import { mkdir, mkdtemp, readdir, readFile, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import path from 'node:path';
import sharp from 'sharp';
import { expect, it } from 'vitest';
import { run } from './helpers.ts';

const root = path.resolve(import.meta.dirname, '../..');

it('a 200-card generated set runs through `bleedwright run` with every card and page accounted for', async () => {
  const dir = await mkdtemp(path.join(tmpdir(), 'bw-scale-'));
  const set = path.join(dir, 'set');
  await mkdir(set);
  // Small, distinct cards (200 x 280 px: low DPI on purpose, it keeps the test quick).
  for (let i = 1; i <= 200; i++) {
    const hue = (i * 37) % 360;
    const svg = `<svg xmlns="http://www.w3.org/2000/svg" width="200" height="280"><rect width="200" height="280" fill="hsl(${hue},60%,50%)"/><rect x="${i % 150}" y="20" width="40" height="40" fill="#fff"/><text x="20" y="200" font-size="48" font-family="sans-serif">${i}</text></svg>`;
    await writeFile(path.join(set, `card-${i}.png`), await sharp(Buffer.from(svg)).png().toBuffer());
  }
  await writeFile(path.join(set, 'back.png'), await sharp({ create: { width: 200, height: 280, channels: 3, background: '#222244' } }).png().toBuffer());
  const recipe = path.join(dir, 'recipe.json');
  await writeFile(
    recipe,
    JSON.stringify({
      name: 'Scale deck',
      back: { art: 'back.png', placement: 'last' },
      sheet: { multiple: 18, pad: 'blank' },
      naming: '{seq:3}-{name}.{ext}',
      outputs: { singles: 'png', pdf: true, sheets: { paper: 'a4', marks: true }, proof: true },
    }),
  );
  const out = path.join(dir, 'out');
  const r = run('node', [path.join(root, 'bin/bleedwright.js'), 'run', set, '--recipe', recipe, '--out', out], { cwd: root });
  expect(r.stderr).toBe('');
  expect(r.status).toBe(0);

  const report = JSON.parse(await readFile(path.join(out, 'report.json'), 'utf8'));
  // 200 faces padded to 216 (a multiple of 18, common practice) plus the back page last.
  expect(report.totals).toMatchObject({ cards: 200, cardsSkipped: 0, faces: 216, paddingAdded: 16, pages: 217 });
  expect(report.cards.filter((c: { role: string; state: string }) => c.role === 'front' && c.state === 'done')).toHaveLength(200);
  const singles = await readdir(path.join(out, 'cards'));
  expect(singles).toHaveLength(201);
  expect(singles.filter((n) => /^\d{3}-card-\d+\.png$/.test(n))).toHaveLength(200);
  expect(run('pdfinfo', [path.join(out, 'scale-deck.pdf')]).stdout).toMatch(/Pages:\s+217\n/);
  expect(run('qpdf', ['--check', path.join(out, 'scale-deck.pdf')]).status).toBe(0);
  // Sheets on A4 hold 3 x 3 poker cards at trim (7.5 x 10.5 in within 210 x 297 mm, ISO 216):
  // 216 faces -> 24 front sheets, each followed by its back sheet, after one instructions page.
  expect(report.totals.sheets).toBe(24);
  expect(run('pdfinfo', [path.join(out, 'sheets-a4.pdf')]).stdout).toMatch(/Pages:\s+49\n/);
  expect(run('pdfinfo', [path.join(out, 'proof.pdf')]).status).toBe(0);
}, 600_000);
