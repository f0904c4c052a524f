// The product's main path in real Chromium against the real server, workers and built client:
// a maker creates a recipe from the defaults, uploads the samples zip (twice: the second is
// deduplicated), starts a run, watches it reach `done` without a reload, downloads the combined PDF
// and checks it with pdfinfo, makes a share link, and a signed-out browser downloads the bundle.
import { execFileSync } from 'node:child_process';
import { mkdirSync, mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { afterAll, beforeAll, describe, expect, it, onTestFailed } from 'vitest';
import { chromium, type Browser } from 'playwright-core';
import unzipper from 'unzipper';
import type { RunningServer } from '../../server/server.ts';
import type { RunCardsResponse, RunResponse } from '../../shared/api/runs.ts';
import { TEST_PASSWORD, createWorkspaceFixture, startTestServer, type WorkspaceFixture } from './fixtures.ts';

const SCREENSHOTS = resolve('.data/screenshots');
const SAMPLES_ZIP = resolve('samples/cinderbrook.zip');

let server: RunningServer;
let browser: Browser;
let downloads: string;
let fixture: WorkspaceFixture;
let workspaceName: string;

beforeAll(async () => {
  server = await startTestServer({ clientDir: resolve('dist') });
  // A workspace of its own each time: uploads are deduplicated per workspace, and this test must
  // upload real bytes into this server's storage.
  fixture = await createWorkspaceFixture(server.deps.db, server.url);
  workspaceName = (await server.deps.db('workspaces').where({ id: fixture.workspaceId }).first()).name;
  browser = await chromium.launch({
    executablePath: '/usr/bin/chromium',
    args: ['--no-sandbox', '--disable-gpu', '--disable-background-networking', '--disable-component-update', '--disable-sync', '--no-first-run'],
  });
  mkdirSync(SCREENSHOTS, { recursive: true });
  downloads = mkdtempSync(join(tmpdir(), 'bw-browser-runs-'));
});
afterAll(async () => {
  await browser?.close();
  await server?.close();
});

/**
 * Expected PDF pages with the default recipe (no back, no padding): one page per copy of every card
 * image, copies from manifest.csv and 1 for an image it does not list (DESIGN.md "manifest.csv").
 */
function expectedPages(imageFiles: string[]): number {
  const rows = readFileSync(resolve('samples/cinderbrook/manifest.csv'), 'utf8').trim().split('\n').slice(1);
  const copies = new Map(rows.map((line) => [line.split(',')[0]!, Number(line.split(',')[1] || 1)]));
  return imageFiles.reduce((sum, file) => sum + (copies.get(file) ?? 1), 0);
}

/** Page count and every page's size and TrimBox as pdfinfo prints them. */
function pdfBoxes(file: string) {
  const pages = Number(/^Pages:\s+(\d+)/m.exec(execFileSync('pdfinfo', [file], { encoding: 'utf8' }))![1]);
  const out = execFileSync('pdfinfo', ['-box', '-f', '1', '-l', String(pages), file], { encoding: 'utf8' });
  const sizes = [...out.matchAll(/^Page\s+\d+ size:\s+([\d.]+) x ([\d.]+) pts/gm)].map((m) => `${m[1]} x ${m[2]}`);
  const trimBoxes = [...out.matchAll(/^Page\s+\d+ TrimBox:\s+(.+)$/gm)].map((m) => m[1]!.trim().split(/\s+/).map(Number));
  return { pages, sizes, trimBoxes };
}

describe('browser: recipe, upload, run, download, share', () => {
  it('a maker runs the default recipe on the samples zip and a signed-out helper downloads the bundle', { timeout: 300_000 }, async () => {
    const maker = { email: fixture.users.maker.email, password: TEST_PASSWORD };
    const recipeName = `Courier deck ${Date.now().toString(36)}`;
    const context = await browser.newContext({ acceptDownloads: true, viewport: { width: 1440, height: 1000 } });
    const page = await context.newPage();
    onTestFailed(() => page.screenshot({ path: `${SCREENSHOTS}/browser-runs-failure.png`, fullPage: true }).then(() => undefined));
    const requested: string[] = [];
    page.on('request', (r) => requested.push(r.url()));

    await page.goto(`${server.url}/w/${fixture.workspaceId}`);
    await page.waitForURL(/\/sign-in/);
    await page.getByLabel('E-mail').fill(maker.email);
    await page.getByLabel('Password').fill(maker.password);
    await page.getByRole('button', { name: 'Sign in' }).click();
    await page.getByRole('heading', { name: workspaceName, exact: true }).waitFor();
    const workspaceUrl = page.url();

    // Recipe from the defaults: the empty name is caught on the client, beside the field.
    await page.getByRole('navigation', { name: 'Workspace' }).getByRole('link', { name: 'Recipes' }).click();
    await page.getByRole('link', { name: 'New recipe' }).click();
    await page.getByRole('heading', { name: 'New recipe' }).waitFor();
    await page.getByRole('button', { name: 'Create recipe' }).click();
    const nameField = page.getByLabel('Name', { exact: true });
    await expect(nameField.getAttribute('aria-invalid')).resolves.toBe('true');
    const nameProblem = page.locator(`[id="${await nameField.getAttribute('aria-describedby')}"]`);
    expect(await nameProblem.textContent()).toBe('is required');
    // Poker + 1/8 in bleed at 300 DPI: 825 x 1125 px; page 198 x 270 pt, TrimBox 9 9 189 261 (arithmetic on ISO 32000-1 units).
    const geometry = page.getByTestId('geometry');
    await geometry.getByText('825 x 1125 px').waitFor();
    await geometry.getByText('198 x 270 pt').waitFor();
    await geometry.getByText('9 9 189 261').waitFor();
    await nameField.fill(recipeName);
    await page.getByRole('button', { name: 'Create recipe' }).click();
    await page.getByRole('status').filter({ hasText: 'Saved as version 1.' }).waitFor();
    await page.getByRole('heading', { name: recipeName }).waitFor();
    await page.screenshot({ path: `${SCREENSHOTS}/recipe-editor.png`, fullPage: true });

    // Upload the samples zip through the page, then once more: the same bytes are not stored twice.
    await page.goto(`${workspaceUrl}/art-sets`);
    await page.getByLabel('Zip file').setInputFiles(SAMPLES_ZIP);
    await page.getByRole('button', { name: 'Upload', exact: true }).click();
    const uploaded = page.getByRole('status').filter({ hasText: /^Uploaded: / });
    await uploaded.waitFor({ timeout: 60_000 });
    await page.getByLabel('Zip file').setInputFiles(SAMPLES_ZIP);
    await page.getByRole('button', { name: 'Upload', exact: true }).click();
    await page.getByRole('status').filter({ hasText: 'This zip was already uploaded' }).waitFor({ timeout: 60_000 });
    await page.screenshot({ path: `${SCREENSHOTS}/art-sets.png`, fullPage: true });

    // The art set page lists every entry with its pixel size; thumbnails load.
    await page.getByRole('status').getByRole('link').click();
    await page.getByRole('heading', { name: 'Files' }).waitFor();
    // Desktop archivers put everything under one top folder and add system files: the folder is the
    // root, every real file is a row, the system files are listed as junk or skipped.
    const zipFiles = (await unzipper.Open.file(SAMPLES_ZIP)).files.filter((f) => f.type === 'File').map((f) => f.path);
    const junk = /(^|\/)(__MACOSX\/|\.DS_Store$|Thumbs\.db$)/;
    const realFiles = zipFiles.filter((p) => !junk.test(p)).map((p) => p.replace(/^cinderbrook\//, ''));
    expect(realFiles.length).toBeGreaterThan(10);
    await page.locator('tbody tr').first().waitFor();
    for (const path of realFiles) await page.locator('tbody tr td', { hasText: new RegExp(`^${path.replace(/\./g, '\\.')}$`) }).first().waitFor();
    expect(await page.getByText(/\.DS_Store/).count()).toBeGreaterThan(0);
    const size = execFileSync('/usr/bin/identify', ['-format', '%w x %h', resolve('samples/cinderbrook/cb-01-ferry-runner.png')], { encoding: 'utf8' });
    await page.getByRole('row', { name: /cb-01-ferry-runner\.png/ }).getByText(size, { exact: true }).waitFor();
    const thumb = page.getByRole('img', { name: 'Thumbnail of cb-01-ferry-runner.png' });
    await expect.poll(() => thumb.evaluate((img: HTMLImageElement) => img.complete && img.naturalWidth > 0), { timeout: 20_000 }).toBe(true);
    await page.screenshot({ path: `${SCREENSHOTS}/art-set.png`, fullPage: true });

    // Start the run and watch it finish on the same page, without a reload.
    await page.getByLabel('Recipe', { exact: true }).selectOption({ label: `${recipeName} (v1)` });
    await page.getByRole('button', { name: 'Start run' }).click();
    await page.waitForURL(/\/runs\/[0-9a-f-]{36}$/);
    const runId = page.url().split('/').pop()!;
    await page.evaluate(() => ((window as unknown as { stillSamePage: boolean }).stillSamePage = true));
    const runState = page.getByTestId('run-state');
    await runState.locator('[data-state="done"], [data-state="failed"], [data-state="canceled"]').waitFor({ timeout: 180_000 });
    expect(await runState.textContent()).toBe('done');
    expect(await page.evaluate(() => (window as unknown as { stillSamePage?: boolean }).stillSamePage)).toBe(true);
    await page.getByRole('link', { name: /Combined PDF/ }).waitFor();
    await page.getByTestId('cards-table').getByRole('row', { name: /cb-12-courier-oath/ }).waitFor();

    const api = `${server.url}/api/workspaces/${fixture.workspaceId}/runs/${runId}`;
    const run = ((await (await page.request.get(api)).json()) as RunResponse).run;
    const cards = ((await (await page.request.get(`${api}/cards`)).json()) as RunCardsResponse).cards;
    expect(run.state).toBe('done');
    expect(await page.getByTestId('run-progress').textContent()).toContain(`${run.progress.total} / ${run.progress.total} cards settled`);
    expect(await page.getByTestId('cards-table').locator('tbody tr').count()).toBe(cards.length);
    await page.screenshot({ path: `${SCREENSHOTS}/run-done.png`, fullPage: true });

    // The combined PDF: one page per card copy, each 198 x 270 pt with TrimBox 9 9 189 261 (ISO 32000-1 14.11.2).
    const [pdfDownload] = await Promise.all([page.waitForEvent('download'), page.getByRole('link', { name: /Combined PDF/ }).click()]);
    const pdfFile = join(downloads, pdfDownload.suggestedFilename());
    await pdfDownload.saveAs(pdfFile);
    expect(pdfDownload.suggestedFilename()).toMatch(/\.pdf$/);
    const boxes = pdfBoxes(pdfFile);
    expect(boxes.pages).toBe(expectedPages(realFiles.filter((p) => /\.(png|jpe?g|webp|tiff?)$/i.test(p))));
    expect(boxes.pages).toBe(run.totals!.pages);
    expect(new Set(boxes.sizes)).toEqual(new Set(['198 x 270']));
    expect(boxes.trimBoxes).toHaveLength(boxes.pages);
    for (const box of boxes.trimBoxes) expect(box).toEqual([9, 9, 189, 261]);

    // A share link, opened in a browser that has never signed in.
    await page.getByLabel('Expires in (hours)').fill('2');
    await page.getByLabel('Label (optional)').fill('for the playtest table');
    await page.getByRole('button', { name: 'Create share link' }).click();
    const shareUrl = await page.getByLabel('Share link URL').inputValue();
    expect(shareUrl).toMatch(new RegExp(`^${server.url}/s/[A-Za-z0-9_-]{20,}$`));
    await page.getByRole('list', { name: 'Share links' }).getByText('for the playtest table').waitFor();
    await page.screenshot({ path: `${SCREENSHOTS}/run-shared.png`, fullPage: true });

    const stranger = await browser.newContext({ acceptDownloads: true });
    const publicPage = await stranger.newPage();
    await publicPage.goto(shareUrl);
    await publicPage.getByRole('heading', { level: 1 }).waitFor();
    expect(await publicPage.getByText(workspaceName).count()).toBeGreaterThan(0);
    const bundle = run.outputs.find((o) => o.kind === 'bundle')!;
    const [bundleDownload] = await Promise.all([publicPage.waitForEvent('download'), publicPage.getByRole('link', { name: new RegExp(bundle.name.replace(/\./g, '\\.')) }).click()]);
    const bundleFile = join(downloads, 'shared-bundle.zip');
    await bundleDownload.saveAs(bundleFile);
    const bundleEntries = (await unzipper.Open.file(bundleFile)).files.map((f) => f.path);
    expect(bundleEntries.some((p) => p.endsWith(pdfDownload.suggestedFilename()))).toBe(true);
    expect(bundleEntries.some((p) => p.endsWith('report.json'))).toBe(true);
    await publicPage.screenshot({ path: `${SCREENSHOTS}/share-public.png`, fullPage: true });

    // Revoked: the same link now says so plainly.
    await page.getByRole('button', { name: /^Revoke for the playtest table/ }).click();
    await page.getByRole('list', { name: 'Share links' }).getByText(/revoked/).waitFor();
    await publicPage.reload();
    await publicPage.getByRole('alert').filter({ hasText: 'was revoked' }).waitFor();
    await publicPage.screenshot({ path: `${SCREENSHOTS}/share-revoked.png`, fullPage: true });

    // Fix one card's art: replacing one image makes revision 2, and the rerun renders only that card.
    await page.goto(`${workspaceUrl}/art-sets/${run.artSet.id}`);
    await page.getByLabel('Images', { exact: true }).setInputFiles({
      name: 'cb-01-ferry-runner.png',
      mimeType: 'image/png',
      buffer: readFileSync(resolve('samples/cinderbrook/cb-07-rope-swing.png')),
    });
    await page.getByRole('button', { name: 'Make a new revision' }).click();
    await page.getByRole('status').filter({ hasText: 'Revision 2 made' }).waitFor({ timeout: 60_000 });
    await page.waitForURL(/\?revision=2$/);
    await page.getByLabel('Recipe', { exact: true }).selectOption({ label: `${recipeName} (v1)` });
    await page.getByRole('button', { name: 'Start run' }).click();
    await page.waitForURL((url) => /\/runs\/[0-9a-f-]{36}$/.test(url.pathname) && !url.pathname.endsWith(runId));
    await runState.locator('[data-state="done"], [data-state="failed"], [data-state="canceled"]').waitFor({ timeout: 180_000 });
    expect(await runState.textContent()).toBe('done');
    const diffPanel = page.locator('section', { has: page.getByRole('heading', { name: 'Changes since the previous run' }) });
    await diffPanel.getByText(`0 added, 1 changed, 0 removed, ${cards.length - 1} unchanged.`).waitFor();
    await diffPanel.getByText('cb-01-ferry-runner.png', { exact: true }).waitFor();
    const rerunId = page.url().split('/').pop()!;
    const rerun = ((await (await page.request.get(api.replace(runId, rerunId))).json()) as RunResponse).run;
    expect(rerun.artSet.revision).toBe(2);
    expect(rerun.progress.cached).toBe(cards.length - 1);
    await page.screenshot({ path: `${SCREENSHOTS}/rerun-diff.png`, fullPage: true });

    // Everything the pages asked for came from the app's own origin.
    expect(requested.filter((u) => !u.startsWith(server.url))).toEqual([]);
    await stranger.close();
    await context.close();
  });

  it('recipe versions, bleed in mm, and an unreadable zip dropped on the upload zone', async () => {
    const context = await browser.newContext({ viewport: { width: 1280, height: 900 } });
    const page = await context.newPage();
    onTestFailed(() => page.screenshot({ path: `${SCREENSHOTS}/browser-runs-failure-2.png`, fullPage: true }).then(() => undefined));
    await page.goto(`${server.url}/w/${fixture.workspaceId}/recipes/new`);
    await page.waitForURL(/\/sign-in/);
    await page.getByLabel('E-mail').fill(fixture.users.maker.email);
    await page.getByLabel('Password').fill(TEST_PASSWORD);
    await page.getByRole('button', { name: 'Sign in' }).click();
    await page.getByRole('heading', { name: 'New recipe' }).waitFor();

    const name = `Bridge deck ${Date.now().toString(36)}`;
    await page.getByLabel('Name', { exact: true }).fill(name);
    await page.getByLabel('Trim size').selectOption('bridge');
    // Bridge + 1/8 in bleed at 300 DPI: 750 x 1125 px (arithmetic, REFERENCES.md).
    await page.getByTestId('geometry').getByText('750 x 1125 px').waitFor();
    await page.getByRole('button', { name: 'Create recipe' }).click();
    await page.getByRole('status').filter({ hasText: 'Saved as version 1.' }).waitFor();

    // A bad value is shown beside its field and nothing is saved.
    const bleed = page.getByLabel('Bleed', { exact: true });
    await bleed.fill('-1');
    await page.getByRole('button', { name: 'Save as a new version' }).click();
    await expect.poll(() => bleed.getAttribute('aria-invalid')).toBe('true');
    await page.locator(`[id="${await bleed.getAttribute('aria-describedby')}"]`).getByText('must be 0 or more').waitFor();

    // 3 mm bleed: (57.15 + 6) x (88.9 + 6) mm at 300 DPI = 745.87 x 1120.87, rounded to 746 x 1121 (DEVELOPERS.md rounding rule).
    await bleed.fill('3');
    await page.getByLabel('Bleed unit').selectOption('mm');
    await page.getByTestId('geometry').getByText('746 x 1121 px').waitFor();
    await page.getByRole('button', { name: 'Save as a new version' }).click();
    await page.getByRole('status').filter({ hasText: 'Saved as version 2.' }).waitFor();
    await page.getByRole('button', { name: 'View v1' }).click();
    const v1 = page.getByLabel('Settings of version 1');
    await v1.waitFor();
    expect(JSON.parse((await v1.textContent())!).bleed).toEqual({ size: 0.125, unit: 'in' });
    await page.screenshot({ path: `${SCREENSHOTS}/recipe-versions.png`, fullPage: true });

    // Dropping a file that is not a zip: the server's code and sentence are shown as they are.
    await page.goto(`${server.url}/w/${fixture.workspaceId}/art-sets`);
    const dataTransfer = await page.evaluateHandle(() => {
      const dt = new DataTransfer();
      dt.items.add(new File(['these are notes, not a zip'], 'broken.zip', { type: 'application/zip' }));
      return dt;
    });
    await page.getByTestId('drop-zone').dispatchEvent('dragover', { dataTransfer });
    await page.getByTestId('drop-zone').dispatchEvent('drop', { dataTransfer });
    await page.getByText('broken.zip ·').waitFor();
    await page.getByRole('button', { name: 'Upload', exact: true }).click();
    const problem = page.getByRole('alert');
    await problem.waitFor();
    expect(await problem.textContent()).toMatch(/^ARCHIVE_[A-Z_]+: .{10,}/);
    await page.screenshot({ path: `${SCREENSHOTS}/upload-error.png`, fullPage: true });
    await context.close();
  });

  it('a helper sees runs and downloads but no controls that write', async () => {
    const context = await browser.newContext({ viewport: { width: 1280, height: 900 } });
    const page = await context.newPage();
    onTestFailed(() => page.screenshot({ path: `${SCREENSHOTS}/browser-runs-failure-3.png`, fullPage: true }).then(() => undefined));
    await page.goto(`${server.url}/w/${fixture.workspaceId}/runs`);
    await page.waitForURL(/\/sign-in/);
    await page.getByLabel('E-mail').fill(fixture.users.helper.email);
    await page.getByLabel('Password').fill(TEST_PASSWORD);
    await page.getByRole('button', { name: 'Sign in' }).click();
    await page.getByRole('heading', { name: 'Runs', exact: true }).waitFor();
    // The runs of the first test are listed, newest first, each with its state.
    const runLinks = page.getByRole('link', { name: /Courier deck/ });
    await runLinks.first().waitFor();
    expect(await runLinks.count()).toBeGreaterThanOrEqual(2);
    await page.screenshot({ path: `${SCREENSHOTS}/runs-list.png`, fullPage: true });
    await runLinks.first().click();
    await page.getByTestId('run-state').getByText('done', { exact: true }).waitFor();
    await page.getByRole('link', { name: /Bundle/ }).waitFor();
    expect(await page.getByRole('button', { name: 'Cancel run' }).count()).toBe(0);
    expect(await page.getByRole('button', { name: 'Create share link' }).count()).toBe(0);

    await page.getByRole('navigation', { name: 'Workspace' }).getByRole('link', { name: 'Recipes' }).click();
    await page.getByRole('link', { name: /Courier deck/ }).first().waitFor();
    expect(await page.getByRole('link', { name: 'New recipe' }).count()).toBe(0);
    expect(await page.getByRole('button', { name: /^(Duplicate|Archive|Unarchive) / }).count()).toBe(0);
    await page.getByRole('link', { name: /Courier deck/ }).first().click();
    await page.getByTestId('geometry').waitFor();
    expect(await page.getByRole('button', { name: /Save as a new version/ }).count()).toBe(0);
    expect(await page.getByLabel('Name', { exact: true }).isDisabled()).toBe(true);
    await context.close();
  });
});
