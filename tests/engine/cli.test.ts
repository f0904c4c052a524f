import { spawn } from 'node:child_process';
import { existsSync, statSync } from 'node:fs';
import { cp, mkdir, mkdtemp, readdir, readFile, rm, symlink, utimes, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { parseRecipe } from '../../shared/recipe.ts';
import { makeZip, rawRgb, run, svgPng } from './helpers.ts';

const root = path.resolve(import.meta.dirname, '../..');
const bin = path.join(root, 'bin/bleedwright.js');
const cli = (...args: string[]) => run('node', [bin, ...args], { cwd: root });

let dir: string;
beforeAll(async () => {
  dir = await mkdtemp(path.join(tmpdir(), 'bw-cli-'));
});

async function writeRecipe(name: string, recipe: unknown): Promise<string> {
  const file = path.join(dir, name);
  await writeFile(file, JSON.stringify(recipe));
  return file;
}

describe('bleedwright recipe / exit code 2', () => {
  it('recipe --example prints a recipe the schema accepts', () => {
    const r = cli('recipe', '--example');
    expect(r.status).toBe(0);
    expect(() => parseRecipe(JSON.parse(r.stdout))).not.toThrow();
  });

  it('a bad recipe exits 2 with one line naming the field', async () => {
    const recipe = await writeRecipe('bad.json', { name: 'x', bleed: { size: -1, unit: 'mm' } });
    const r = cli('run', 'samples/cinderbrook', '--recipe', recipe, '--out', path.join(dir, 'never'));
    expect(r.status).toBe(2);
    expect(r.stderr).toBe('RECIPE_INVALID: bleed.size: must be 0 or more\n');
    expect(existsSync(path.join(dir, 'never'))).toBe(false);
  });

  it('an unreadable or hostile archive exits 2 with its code, and nothing is written outside the out folder', async () => {
    const recipe = await writeRecipe('ok.json', { name: 'x' });
    const garbage = path.join(dir, 'garbage.zip');
    await writeFile(garbage, 'not a zip');
    const r1 = cli('run', garbage, '--recipe', recipe, '--out', path.join(dir, 'g-out'));
    expect(r1.status).toBe(2);
    expect(r1.stderr).toMatch(/^ARCHIVE_UNREADABLE: [^\n]+\n$/);

    // A sibling-prefix escape (REFERENCES.md: unzipper's extract() lets "../out2/x" through).
    const box = path.join(dir, 'box');
    await mkdir(box);
    const png = await svgPng(75, 105, '<rect width="75" height="105" fill="#808000"/>');
    const hostile = path.join(box, 'hostile.zip');
    await writeFile(hostile, makeZip([{ name: 'a.png', data: png }, { name: '../out2/x.png', data: png }]));
    const r2 = cli('run', hostile, '--recipe', recipe, '--out', path.join(box, 'out'));
    expect(r2.status).toBe(2);
    expect(r2.stderr).toMatch(/^ARCHIVE_PATH: "\.\.\/out2\/x\.png" points outside the archive\n$/);
    expect((await readdir(box)).sort()).toEqual(['hostile.zip']);
  });

  it('wrong arguments exit 2', () => {
    expect(cli('run', 'samples/cinderbrook').status).toBe(2);
  });
});

describe('bleedwright run on the samples', () => {
  it('writes every output, exits 0, and the PDF checks out against outside tools', async () => {
    const parent = await mkdtemp(path.join(tmpdir(), 'bw-samples-'));
    const out = path.join(parent, 'out');
    const r = cli('run', 'samples/cinderbrook.zip', '--recipe', 'samples/poker.json', '--out', out);
    expect(r.stderr).toBe('');
    expect(r.status).toBe(0);
    // Not a TTY: no progress bar, just the summary.
    expect(r.stdout).not.toMatch(/\r|\u2591|\u2588/);
    expect(await readdir(parent)).toEqual(['out']); // nothing beside the out folder
    const files = (await readdir(out)).sort();
    expect(files).toEqual(['bundle.zip', 'cards', 'cinderbrook-couriers-poker.pdf', 'proof.pdf', 'report.csv', 'report.json', 'sheets-letter.pdf']);

    const report = JSON.parse(await readFile(path.join(out, 'report.json'), 'utf8'));
    // 12 cards, 16 faces from the manifest copies, padded to 18 (common practice), one back page last.
    expect(report.totals).toMatchObject({ cards: 12, cardsSkipped: 0, faces: 18, paddingAdded: 2, pages: 19 });
    expect(report.skippedFiles.map((s: { path: string }) => s.path).sort()).toEqual(['__MACOSX/cinderbrook/._back.png', 'cinderbrook/.DS_Store', 'cinderbrook/Thumbs.db']);
    const owl = report.cards.find((c: { source: string }) => c.source === 'cb-05-owl-post.png');
    expect(owl.findings[0]).toMatchObject({ code: 'VERY_LOW_DPI', numbers: { effectiveDpi: 120 } });
    const cards = (await readdir(path.join(out, 'cards'))).sort();
    expect(cards).toHaveLength(report.outputs.singles);
    expect(cards[0]).toBe('001-cb-01-ferry-runner.png');
    expect(cards.at(-1)).toBe('019-back.png');

    const pdf = path.join(out, 'cinderbrook-couriers-poker.pdf');
    // qpdf --check: syntax and streams
    const check = run('qpdf', ['--check', pdf]);
    expect(check.status).toBe(0);
    expect(check.stdout).toContain('No syntax or stream encoding errors found');
    // ISO 32000-1 14.11.2 page boundaries, 1/72 in user unit: poker + 1/8 in bleed = 198 x 270 pt, TrimBox 9 9 189 261
    const info = run('pdfinfo', ['-box', '-f', '1', '-l', '1', pdf]).stdout;
    expect(info).toMatch(/Pages:\s+19\n/);
    expect(info).toMatch(/Title:\s+Cinderbrook Couriers - poker/);
    expect(info).toMatch(/Page\s+1 size:\s+198 x 270 pts/);
    expect(info).toMatch(/Page\s+1 TrimBox:\s+9\.00\s+9\.00\s+189\.00\s+261\.00/);
    // pdfinfo clips boxes to the MediaBox, so read the raw page dictionary too.
    const json = JSON.parse(run('qpdf', ['--json', '--json-key=pages', '--json-key=qpdf', pdf]).stdout);
    const firstPage = json.pages[0].object as string; // e.g. "4 0 R"
    const dict = json.qpdf[1][`obj:${firstPage}`].value as Record<string, unknown>;
    expect(dict['/MediaBox']).toEqual([0, 0, 198, 270]);
    expect(dict['/BleedBox']).toEqual([0, 0, 198, 270]);
    expect(dict['/TrimBox']).toEqual([9, 9, 189, 261]);

    // Lossless round trip: the first page's image (pdfimages, poppler) has the single PNG's pixels.
    const prefix = path.join(parent, 'img');
    expect(run('pdfimages', ['-png', '-f', '1', '-l', '1', pdf, prefix]).status).toBe(0);
    const extracted = await rawRgb(await readFile(`${prefix}-000.png`));
    const single = await rawRgb(await readFile(path.join(out, 'cards', cards[0]!)));
    expect([extracted.w, extracted.h]).toEqual([825, 1125]);
    expect(extracted.data.equals(single.data)).toBe(true);

    // The bundle holds everything.
    const listing = run('unzip', ['-Z1', path.join(out, 'bundle.zip')]);
    expect(listing.status).toBe(0);
    expect(listing.stdout.trim().split('\n').sort()).toEqual(
      [...cards.map((c) => `cards/${c}`), 'cinderbrook-couriers-poker.pdf', 'proof.pdf', 'report.csv', 'report.json', 'sheets-letter.pdf'].sort(),
    );
    // Idempotent: a second run (a retry) writes the same bytes.
    const again = path.join(parent, 'again');
    expect(cli('run', 'samples/cinderbrook.zip', '--recipe', 'samples/poker.json', '--out', again).status).toBe(0);
    for (const f of ['bundle.zip', 'report.json', 'cinderbrook-couriers-poker.pdf']) {
      expect((await readFile(path.join(again, f))).equals(await readFile(path.join(out, f))), f).toBe(true);
    }
    const csv = await readFile(path.join(out, 'report.csv'), 'utf8');
    expect(csv.split('\r\n')[0]).toBe('source,role,title,state,outputs,copies,source_width,source_height,format,effective_dpi,turn,fill,source_kind,finding_codes,findings');
  });

  it('check prints the findings table and writes nothing', async () => {
    const before = await readdir(path.join(root, 'samples'));
    const r = cli('check', 'samples/cinderbrook', '--recipe', 'samples/poker.json');
    expect(r.status).toBe(0);
    expect(r.stdout).toMatch(/cb-05-owl-post\.png\s+300x420\s+120\s+warn\s+VERY_LOW_DPI/);
    expect(await readdir(path.join(root, 'samples'))).toEqual(before);
  });
});

describe('one bad file never sinks a run', () => {
  it('skips the garbage card, exits 1, the report says why, the others are produced', async () => {
    const set = path.join(dir, 'set-with-garbage');
    await mkdir(set);
    for (const [i, color] of ['#aa0000', '#00aa00'].entries()) {
      await writeFile(path.join(set, `card-${i + 1}.png`), await svgPng(150, 210, `<rect width="150" height="210" fill="${color}"/><circle cx="40" cy="50" r="30" fill="#fff"/>`));
    }
    await writeFile(path.join(set, 'card-3.png'), Buffer.from('\x89PNG garbage, not really an image'));
    const recipe = await writeRecipe('small.json', { name: 'Garbage test', dpi: 72, outputs: { singles: 'png', pdf: true, sheets: null, proof: false } });
    const out = path.join(dir, 'garbage-out');
    const r = cli('run', set, '--recipe', recipe, '--out', out);
    expect(r.status).toBe(1);
    expect(r.stdout).toContain('skipped card-3.png');
    const report = JSON.parse(await readFile(path.join(out, 'report.json'), 'utf8'));
    const bad = report.cards.find((c: { source: string }) => c.source === 'card-3.png');
    expect(bad.state).toBe('skipped');
    expect(bad.skippedBecause).toMatch(/^(NOT_AN_IMAGE|UNREADABLE|TRUNCATED): /);
    expect(report.totals).toMatchObject({ cards: 2, cardsSkipped: 1, pages: 2 });
    expect((await readdir(path.join(out, 'cards'))).sort()).toEqual(['card-1.png', 'card-2.png']);
    expect(run('pdfinfo', [path.join(out, 'garbage-test.pdf')]).stdout).toMatch(/Pages:\s+2\n/);

    // --timings adds one line on stderr saying where the time went; stdout is the same summary.
    const timed = cli('run', set, '--recipe', recipe, '--out', out, '--timings');
    expect(timed.status).toBe(1);
    expect(timed.stdout).toBe(r.stdout);
    const t = /^timings: start (\d+) ms, art set (\d+) ms, cards (\d+) ms, assembly (\d+) ms\n$/.exec(timed.stderr);
    expect(t, timed.stderr).not.toBeNull();
    expect(Number(t![1])).toBeGreaterThan(0); // a Node.js process takes some time to start
  });
});

describe('the prebuilt CLI bundle (scripts/build-cli.mjs)', () => {
  type Manifest = { entry: string; builtAt: number; inputs: string[]; outputs: string[] };
  const manifestOf = async (at: string): Promise<Manifest> => JSON.parse(await readFile(path.join(at, 'dist-cli/manifest.json'), 'utf8'));
  const cliAt = (at: string, args: string[], env: NodeJS.ProcessEnv = {}) =>
    new Promise<{ status: number; stdout: string; stderr: string }>((resolve, reject) => {
      const child = spawn('node', [path.join(at, 'bin/bleedwright.js'), ...args], { cwd: at, env: { ...process.env, ...env } });
      let stdout = '';
      let stderr = '';
      child.stdout.on('data', (d) => (stdout += d));
      child.stderr.on('data', (d) => (stderr += d));
      child.on('error', reject);
      child.on('close', (code) => resolve({ status: code ?? -1, stdout, stderr }));
    });

  const copies: string[] = [];
  afterAll(async () => {
    for (const at of copies) await rm(at, { recursive: true, force: true });
  });

  /** A copy of the CLI's sources in a folder of its own, so its bundle can be removed and made stale. */
  async function checkoutCopy(withTsx: boolean): Promise<string> {
    const at = await mkdtemp(path.join(tmpdir(), 'bw-cli-bundle-'));
    copies.push(at);
    for (const part of ['bin', 'cli', 'shared', 'jobs/engine', 'scripts/build-cli.mjs', 'tsconfig.json', 'package.json']) {
      await cp(path.join(root, part), path.join(at, part), { recursive: true });
    }
    // Without tsx the CLI can only start from the bundle: a run that answers proves the bundle ran.
    await mkdir(path.join(at, 'node_modules'));
    for (const name of await readdir(path.join(root, 'node_modules'))) {
      if (withTsx || name !== 'tsx') await symlink(path.join(root, 'node_modules', name), path.join(at, 'node_modules', name));
    }
    return at;
  }

  it('the CLI in this checkout runs a bundle built from every source it imports', async () => {
    expect(cli('recipe', '--example').status).toBe(0);
    const manifest = await manifestOf(root);
    expect(manifest.inputs).toEqual(expect.arrayContaining(['cli/main.ts', 'cli/format.ts', 'shared/recipe.ts', 'jobs/engine/run.ts', 'jobs/engine/sheets.ts', 'tsconfig.json']));
    for (const file of manifest.inputs) expect(statSync(path.join(root, file)).mtimeMs, file).toBeLessThan(manifest.builtAt);
    expect(existsSync(path.join(root, 'dist-cli', manifest.entry))).toBe(true);
  });

  it('builds the bundle when it is absent, also with two CLIs starting at once', async () => {
    const at = await checkoutCopy(false);
    expect(existsSync(path.join(at, 'dist-cli'))).toBe(false);
    const [a, b] = await Promise.all([cliAt(at, ['recipe', '--example']), cliAt(at, ['recipe', '--example'])]);
    for (const r of [a, b]) {
      expect(r.stderr).toBe('');
      expect(r.status).toBe(0);
      expect(() => parseRecipe(JSON.parse(r.stdout))).not.toThrow();
    }
    const manifest = await manifestOf(at);
    expect(manifest.inputs).toContain('cli/main.ts');
    // Nothing half-written left behind: every file is an output of the build or the manifest.
    expect((await readdir(path.join(at, 'dist-cli'))).sort()).toEqual([...manifest.outputs, 'manifest.json'].sort());
  });

  it('rebuilds a stale bundle: a source newer than the bundle -> the CLI still answers and the bundle is newer', async () => {
    const at = await checkoutCopy(false);
    expect((await cliAt(at, ['recipe', '--example'])).status).toBe(0);
    const before = await manifestOf(at);
    // Unchanged sources: the bundle is reused as it is.
    expect((await cliAt(at, ['recipe', '--example'])).status).toBe(0);
    expect((await manifestOf(at)).builtAt).toBe(before.builtAt);

    const source = path.join(at, 'cli/format.ts');
    const now = new Date(); // `touch`
    await utimes(source, now, now);
    expect(statSync(source).mtimeMs).toBeGreaterThan(before.builtAt);
    const r = await cliAt(at, ['recipe', '--example']);
    expect(r.stderr).toBe('');
    expect(r.status).toBe(0);
    expect(() => parseRecipe(JSON.parse(r.stdout))).not.toThrow();
    const after = await manifestOf(at);
    expect(after.builtAt).toBeGreaterThan(statSync(source).mtimeMs);
    expect(statSync(path.join(at, 'dist-cli', after.entry)).mtimeMs).toBeGreaterThan(statSync(source).mtimeMs);
  });

  it('falls back to tsx when the bundle cannot be written', async () => {
    const at = await checkoutCopy(true);
    await writeFile(path.join(at, 'dist-cli'), 'a file where the bundle folder would go');
    const r = await cliAt(at, ['recipe', '--example'], { BLEEDWRIGHT_DEBUG: '1' });
    expect(r.status).toBe(0);
    expect(() => parseRecipe(JSON.parse(r.stdout))).not.toThrow();
    expect(r.stderr).toMatch(/^bleedwright: CLI bundle not built, using tsx: /);
  });
});

describe('malloc settings (scripts/malloc-env.mjs)', () => {
  it('the shebang, package.json start and worker scripts all set them; the shebang hands them to node', async () => {
    const { MALLOC_ENV, mallocAssignments } = await import('../../scripts/malloc-env.mjs');
    const shebang = (await readFile(bin, 'utf8')).split('\n')[0]!;
    expect(shebang).toBe(`#!/usr/bin/env -S ${mallocAssignments()} node`);
    const scripts = JSON.parse(await readFile(path.join(root, 'package.json'), 'utf8')).scripts as Record<string, string>;
    expect(scripts.start!.startsWith(`${mallocAssignments()} `)).toBe(true);
    expect(scripts.worker!.startsWith(`${mallocAssignments()} `)).toBe(true);
    // The same first line on a script that prints what the process got (env -S splits it, as the kernel does not).
    const probe = path.join(dir, 'probe.mjs');
    await writeFile(probe, `${shebang}\nconsole.log(JSON.stringify(Object.fromEntries(Object.keys(${JSON.stringify(MALLOC_ENV)}).map((k) => [k, process.env[k]]))));\n`, { mode: 0o755 });
    const r = run(probe, [], { cwd: root });
    expect(r.status).toBe(0);
    expect(JSON.parse(r.stdout)).toEqual(MALLOC_ENV);
    // And the CLI itself runs that way, as `npx bleedwright` starts it.
    const direct = run(bin, ['recipe', '--example'], { cwd: root });
    expect(direct.status).toBe(0);
    expect(() => parseRecipe(JSON.parse(direct.stdout))).not.toThrow();
  });
});
