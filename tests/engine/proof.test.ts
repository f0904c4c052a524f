import { execFile } from 'node:child_process';
import { mkdtemp, readFile, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { promisify } from 'node:util';
import sharp from 'sharp';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { proofLayout, writeProof, type ProofCard } from '../../jobs/engine/proof.ts';

const run = promisify(execFile);
const poker = { w: 2.5, h: 3.5 }; // common practice
const bleedIn = 0.125; // common practice
const safeIn = 0.125;

let dir: string;
beforeAll(async () => {
  dir = await mkdtemp(path.join(tmpdir(), 'bw-proof-'));
});
afterAll(async () => {
  await rm(dir, { recursive: true, force: true });
});

async function card(name: string, hue: number): Promise<string> {
  const file = path.join(dir, name);
  // 1/4 of 300 DPI keeps the test fast; the proof only needs thumbnails.
  await sharp({ create: { width: 206, height: 281, channels: 3, background: { r: hue, g: 255 - hue, b: 120 } } })
    .png()
    .toFile(file);
  return file;
}

describe('writeProof', () => {
  it('lays out a contact sheet with names, finding codes, legend and geometry', async () => {
    const layout = proofLayout({ trimIn: poker, bleedIn });
    expect(layout.perPage).toBeGreaterThanOrEqual(9);
    const count = layout.perPage + 3; // spills onto a second page
    const cards: ProofCard[] = [];
    for (let i = 0; i < count; i++) {
      cards.push({
        pngPath: await card(`c${i}.png`, (i * 37) % 256),
        name: `ember-warden-${String(i + 1).padStart(3, '0')}.png`,
        findings: [],
      });
    }
    cards[1].findings = [{ code: 'DPI_LOW', severity: 'warn' }];
    cards[2].findings = [
      { code: 'ART_HAS_BLEED', severity: 'info' },
      { code: 'ALPHA_FLATTENED', severity: 'info' },
    ];
    cards[count - 1].findings = [
      { code: 'DPI_SOFT', severity: 'warn' },
      { code: 'SAME_PIXELS', severity: 'info' },
    ];
    cards[5].name = 'ember-warden-with-a-very-long-name-tail.png';
    // Names with characters outside WinAnsi must not break drawing with the standard fonts.
    cards[3].name = 'Gl\u0129mmer \u2116 7 \u263a \u00e9.png';
    const outPath = path.join(dir, 'proof.pdf');
    const result = await writeProof({ cards, trimIn: poker, bleedIn, safeIn, title: 'Ember Wardens proof', outPath });
    expect(result.pages).toBe(Math.ceil(count / layout.perPage));
    expect(result.pages).toBe(2);

    const { stdout: check } = await run('qpdf', ['--check', outPath]);
    expect(check).toContain('No syntax or stream encoding errors found');
    const { stdout: info } = await run('pdfinfo', [outPath]);
    expect(info).toMatch(/^Pages:\s+2$/m);
    expect(info).toMatch(/^Title:\s+Ember Wardens proof$/m);

    const { stdout } = await run('pdftotext', [outPath, '-']);
    const text = stdout.replace(/\s+/g, ' ');
    for (const c of cards) if (c !== cards[3] && c !== cards[5]) expect(text).toContain(c.name);
    expect(text).toContain('Glimmer No 7 ? \u00e9.png');
    // A long output name wraps onto a second line instead of being cut.
    expect(stdout.replace(/\s+/g, '')).toContain('ember-warden-with-a-very-long-name-tail.png');
    for (const code of ['DPI_LOW', 'ART_HAS_BLEED', 'ALPHA_FLATTENED', 'DPI_SOFT', 'SAME_PIXELS']) expect(text).toContain(code);
    expect(text).toContain(`${count} cards, 3 with findings`);
    expect(text).toContain('Trim 2.5 in x 3.5 in (63.5 mm x 88.9 mm), bleed 0.125 in, safe margin 0.125 in');
    expect(text).toContain('198 x 270 pt');
    expect(text).toContain('trim line');
    expect(text).toContain('safe line');
  });

  it('writes one page for a small deck, the same bytes on a retry', async () => {
    const outPath = path.join(dir, 'small.pdf');
    const cards: ProofCard[] = [{ pngPath: await card('solo.png', 10), name: 'solo.png', findings: [{ code: 'DPI_LOW', severity: 'warn' }] }];
    expect(await writeProof({ cards, trimIn: poker, bleedIn, safeIn, title: 'Solo', outPath })).toEqual({ pages: 1 });
    const { stdout } = await run('qpdf', ['--check', outPath]);
    expect(stdout).toContain('No syntax or stream encoding errors found');
    const again = path.join(dir, 'small-again.pdf');
    await writeProof({ cards, trimIn: poker, bleedIn, safeIn, title: 'Solo', outPath: again });
    expect((await readFile(outPath)).equals(await readFile(again))).toBe(true);
  });
});
