// The dashboard in real Chromium against the real server, workers and built client: the card
// preview changes with the preset and the unit, a finished run is inspected card by card with the
// keyboard, its deck is seen by press sheets, and a print order is priced from a price sheet that is
// entered through the page. A screenshot of each main page is saved to .data/screenshots/.
import { randomBytes } from 'node:crypto';
import { mkdirSync } from 'node:fs';
import { mkdtemp, readFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import pg from 'pg';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { chromium, type Browser, type BrowserContext, type Page } from 'playwright-core';
import { startServer, type RunningServer } from '../../server/server.ts';
import { createLogger } from '../../server/logger.ts';
import { TEST_PASSWORD, createWorkspaceFixture, type WorkspaceFixture } from './fixtures.ts';
import { cardPng, cardSet, smallRecipe, upload, waitForRun, zipOf } from './runs-fixtures.ts';

const SCREENSHOTS = resolve('.data/screenshots');

let server: RunningServer;
let browser: Browser;
let fx: WorkspaceFixture;
let runId: string;
let recipeId: string;
let cardIds: string[];
let interleavedRunId: string;
// Its own job schema, so workers of other test servers on the shared cluster never take its jobs.
const bossSchema = `pgboss_d${randomBytes(4).toString('hex')}`;

beforeAll(async () => {
  const base = await mkdtemp(join(tmpdir(), 'bw-dashboard-'));
  server = await startServer({
    databaseUrl: process.env.DATABASE_URL!,
    port: 0,
    mail: { catcherPort: 0 },
    clientDir: resolve('dist'),
    storageRoot: join(base, 'storage'),
    sessionSecret: randomBytes(16).toString('hex'),
    seed: false,
    logger: createLogger('silent'),
    runs: { tmpDir: join(base, 'tmp'), pollingSeconds: 0.5, maintenanceSeconds: 1, bossSchema },
  });
  fx = await createWorkspaceFixture(server.deps.db, server.url);
  const api = `/api/workspaces/${fx.workspaceId}`;
  // A finished run to inspect: 5 fronts (card 3 far too small for 100 DPI) and a back printed last,
  // padded with blanks to sheets of 4, so 5 faces become 8.
  const recipe = await fx.actors.maker.post(`${api}/recipes`, {
    settings: smallRecipe('Lantern deck', { back: { art: 'back.png', placement: 'last' }, sheet: { multiple: 4, pad: 'blank' } }),
  });
  expect(recipe.status).toBe(201);
  recipeId = recipe.body.recipe.id;
  const files = { ...(await cardSet(5)), 'card-03.png': await cardPng(3, 0, { w: 100, h: 140 }), 'back.png': await cardPng(99, 2) };
  const art = await upload(fx.actors.maker, `${api}/art-sets`, [{ field: 'file', name: 'art.zip', data: await readFile(await zipOf(files)) }], { name: 'Lantern art' });
  expect(art.status).toBe(201);
  const start = await fx.actors.maker.post(`${api}/runs`, { recipeId: recipe.body.recipe.id, artSetId: art.body.artSet.id });
  expect(start.status).toBe(201);
  runId = start.body.run.id;
  const finished = await waitForRun(fx.actors.maker, fx.workspaceId, runId);
  expect(finished.error ?? finished.state).toBe("done");
  const cards = (await fx.actors.maker.get(`${api}/runs/${runId}/cards`)).body.cards as Array<{ id: string; seq: number }>;
  cardIds = cards.sort((a, b) => a.seq - b.seq).map((c) => c.id);
  expect(cardIds).toHaveLength(6);

  // A second run whose backs are interleaved: the manifest puts card-02 first with 2 copies and its own
  // back (back-b); the others get the recipe's back (back-a).
  const manifest = ['file,copies,back', 'card-02.png,2,back-b.png', 'card-01.png,1,', 'card-03.png,1,', ''].join('\n');
  const interleavedFiles = { ...(await cardSet(3)), 'back-a.png': await cardPng(97, 1), 'back-b.png': await cardPng(98, 3), 'manifest.csv': Buffer.from(manifest) };
  const interleavedRecipe = await fx.actors.maker.post(`${api}/recipes`, {
    settings: smallRecipe('Ferry deck', { order: 'manifest', back: { art: 'back-a.png', placement: 'interleaved' }, sheet: { multiple: 4, pad: 'none' } }),
  });
  const interleavedArt = await upload(fx.actors.maker, `${api}/art-sets`, [{ field: 'file', name: 'ferry.zip', data: await readFile(await zipOf(interleavedFiles)) }], { name: 'Ferry art' });
  const interleavedStart = await fx.actors.maker.post(`${api}/runs`, { recipeId: interleavedRecipe.body.recipe.id, artSetId: interleavedArt.body.artSet.id });
  interleavedRunId = interleavedStart.body.run.id;
  const interleaved = await waitForRun(fx.actors.maker, fx.workspaceId, interleavedRunId);
  expect(interleaved.error ?? interleaved.state).toBe('done');

  browser = await chromium.launch({
    executablePath: '/usr/bin/chromium',
    args: ['--no-sandbox', '--disable-gpu', '--disable-background-networking', '--disable-component-update', '--disable-sync', '--no-first-run'],
  });
  mkdirSync(SCREENSHOTS, { recursive: true });
}, 180_000);
afterAll(async () => {
  await browser?.close();
  await server?.close();
  const client = new pg.Client({ connectionString: process.env.DATABASE_URL });
  await client.connect();
  await client.query(`drop schema if exists ${bossSchema} cascade`);
  await client.end();
});

async function signIn(page: Page, email: string) {
  await page.goto(`${server.url}/w/${fx.workspaceId}`);
  await page.waitForURL(/\/sign-in/);
  await page.getByLabel('E-mail').fill(email);
  await page.getByLabel('Password').fill(TEST_PASSWORD);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await page.waitForURL((url) => !url.pathname.startsWith('/sign-in'));
  await page.getByRole('navigation', { name: 'Workspace' }).waitFor();
}

const text = (page: Page, testId: string) => page.getByTestId(testId).first().textContent();


/** A 1280 px browser tab signed in as the maker, with the page errors it collects. */
async function makerPage(): Promise<{ context: BrowserContext; page: Page; errors: string[] }> {
  const context = await browser.newContext({ viewport: { width: 1280, height: 900 } });
  const page = await context.newPage();
  const errors: string[] = [];
  page.on('pageerror', (e) => errors.push(e.message));
  await signIn(page, fx.users.maker.email);
  return { context, page, errors };
}

/** A finished run row with the same recipe version and art set as `modelRunId`, for cards written straight into the table. */
async function insertDoneRunLike(modelRunId: string): Promise<{ id: string }> {
  const db = server.deps.db;
  const model = await db('runs').where({ id: modelRunId }).first();
  const [row] = await db('runs')
    .insert({ workspace_id: model.workspace_id, recipe_version_id: model.recipe_version_id, art_set_revision_id: model.art_set_revision_id, state: 'done', created_by: model.created_by, finished_at: db.fn.now() })
    .returning('id');
  return row;
}
describe('browser: dashboard and print planning', () => {
  it('home, card preview, proof viewer, deck and planner work for a maker', { timeout: 240_000 }, async () => {
    const { context, page, errors } = await makerPage();
    const ws = `${server.url}/w/${fx.workspaceId}`;

    // Home: the run with its state and findings; the guide shows the steps left.
    await page.getByTestId('home-runs').getByText('Lantern deck on Lantern art').waitFor();
    const guide = page.getByTestId('first-run-guide');
    // Recipe, art and run are done, so only the proof and the PDF steps are left.
    expect(await guide.locator('[data-step]').evaluateAll((els) => els.map((e) => e.getAttribute('data-step')))).toEqual(['proof', 'pdf']);
    await guide.getByText('3 of 5 done').waitFor();
    expect(await page.getByTestId('home-runs').getByRole('listitem').filter({ hasText: 'Lantern deck on Lantern art' }).getByLabel(/1 errors|0 errors/).count()).toBe(1);
    await page.screenshot({ path: `${SCREENSHOTS}/home.png`, fullPage: true });

    // Card preview: poker in inches, then tarot, then millimetres.
    await page.goto(`${ws}/preview`);
    await page.getByTestId('recipe-preview').waitFor();
    expect(await text(page, 'preview-dim-width')).toBe('2.5 in'); // poker 2.5 x 3.5 in: common practice
    expect(await text(page, 'preview-dim-height')).toBe('3.5 in');
    expect(await text(page, 'preview-bleed')).toBe('0.125 in');
    await page.getByLabel('Trim size').selectOption('tarot');
    expect(await text(page, 'preview-dim-width')).toBe('2.756 in'); // 70 mm / 25.4
    expect(await page.getByTestId('preview-svg').getAttribute('data-trim-mm')).toBe('70.00x120.00');
    await page.getByLabel('Units').selectOption('mm');
    expect(await text(page, 'preview-dim-width')).toBe('70 mm');
    expect(await text(page, 'preview-dim-height')).toBe('120 mm');
    expect(await text(page, 'preview-bleed')).toBe('3.18 mm'); // 1/8 in = 3.175 mm, typed value rounded to 0.01 mm
    await page.getByLabel('Bleed (mm)').fill('3');
    expect(await text(page, 'preview-page')).toBe('76 mm x 126 mm');
    await page.getByLabel('Landscape art', { exact: true }).selectOption('counterclockwise');
    expect(await page.getByTestId('preview-turn-result').getAttribute('data-turn')).toBe('counterclockwise');
    await page.screenshot({ path: `${SCREENSHOTS}/card-preview.png`, fullPage: true });

    // The same preview in the recipe editor follows the form as it is edited.
    await page.goto(`${ws}/recipes/${recipeId}`);
    await page.getByTestId('recipe-preview').waitFor();
    expect(await text(page, 'preview-dim-width')).toBe('2.5 in');
    await page.getByLabel('Trim size').selectOption('bridge');
    expect(await text(page, 'preview-dim-width')).toBe('2.25 in'); // bridge 2.25 x 3.5 in: common practice
    await page.getByLabel('Bleed unit', { exact: true }).selectOption('mm');
    await page.getByLabel('Bleed', { exact: true }).fill('3');
    expect(await text(page, 'preview-dim-width')).toBe('57.15 mm');
    expect(await text(page, 'preview-bleed')).toBe('3 mm');
    await page.screenshot({ path: `${SCREENSHOTS}/recipe-editor-preview.png`, fullPage: true });

    // Deck by press sheets: 5 faces padded to 8 at 4 a sheet; the back page is not a slot.
    await page.goto(`${ws}/runs/${runId}/deck`);
    await page.getByTestId('deck-view').waitFor();
    expect(await page.getByTestId('deck-view').getAttribute('data-sheets')).toBe('2');
    expect(await page.locator('[data-testid="deck-slot"][data-padding="true"]').count()).toBe(3);
    expect(await page.locator('[data-testid="deck-slot"][data-kind="front"]').count()).toBe(5);
    expect(await page.getByRole('region', { name: 'Press sheet 2: slots 5 to 8' }).count()).toBe(1);
    expect(await text(page, 'deck-backs')).toContain('page 9 of 9');
    await page.screenshot({ path: `${SCREENSHOTS}/deck.png`, fullPage: true });

    // Proof viewer: open the first card from the deck, step with the keyboard, toggle lines with g.
    await page.locator('[data-testid="deck-slot"]').first().click();
    await page.waitForURL(new RegExp(`/runs/${runId}/cards/${cardIds[0]}$`));
    const card = page.getByTestId('proof-card');
    await card.waitFor();
    expect(await card.getAttribute('data-lines')).toBe('true');
    expect(await page.getByTestId('card-lines').count()).toBe(1);
    await page.keyboard.press('g');
    expect(await card.getAttribute('data-lines')).toBe('false');
    expect(await page.getByTestId('card-lines').count()).toBe(0);
    await page.getByRole('button', { name: 'Trim, bleed and safe lines' }).click();
    expect(await card.getAttribute('data-lines')).toBe('true');
    await page.keyboard.press('ArrowRight');
    await page.waitForURL(new RegExp(`/cards/${cardIds[1]}$`));
    await page.keyboard.press('ArrowRight');
    await page.waitForURL(new RegExp(`/cards/${cardIds[2]}$`));
    await expect.poll(() => text(page, 'proof-position')).toContain('Card 3 of 6: card-03.png');
    // The small card's findings are beside it: 100 px across 2.5 in is 40 DPI.
    await page.getByTestId('card-findings').getByText('VERY_LOW_DPI').waitFor();
    expect(await text(page, 'card-place')).toBe('Slot 3 of 9.');
    expect(await page.getByTestId('card-back').textContent()).toContain('page 9 of 9');
    const img = page.getByRole('img', { name: /Card 3, card-03.png/ });
    await expect.poll(() => img.evaluate((el: HTMLImageElement) => el.complete && el.naturalWidth)).toBe(275); // poker + 1/8 in bleed at 100 DPI
    await page.screenshot({ path: `${SCREENSHOTS}/proof-viewer.png`, fullPage: true });
    await page.keyboard.press('ArrowLeft');
    await page.waitForURL(new RegExp(`/cards/${cardIds[1]}$`));

    // A price sheet entered through the page (invented prices).
    await page.goto(`${ws}/price-sheets`);
    await page.getByRole('button', { name: 'New price sheet' }).click();
    await page.getByLabel('Sheet name').fill('Invented demo sheet');
    await page.getByLabel('Currency').selectOption('EUR');
    await page.getByLabel('Size 1: price per set').fill('4');
    await page.getByLabel('Size 2: price per set').fill('7.5');
    await page.getByLabel('Size 3: price per set').fill('12');
    await page.getByLabel('Setup fee', { exact: true }).fill('20');
    await page.getByLabel('Setup fee waived from (sets)').fill('10');
    await page.screenshot({ path: `${SCREENSHOTS}/price-sheet-form.png`, fullPage: true });
    await page.getByRole('button', { name: 'Save price sheet' }).click();
    await page.getByText('Setup fee €20.00, waived from 10 sets.').waitFor();
    await page.screenshot({ path: `${SCREENSHOTS}/price-sheets.png`, fullPage: true });

    // Plan the run's print: its 5 faces at 4 a sheet, then at 18, 1 set then 10.
    await page.goto(`${ws}/runs/${runId}/plan`);
    await page.getByTestId('plan-run-faces').waitFor();
    expect(await text(page, 'plan-cards')).toBe('5');
    expect(await text(page, 'plan-padded')).toBe('8');
    await page.getByLabel('Sheet multiple').selectOption('18');
    expect(await text(page, 'plan-padded')).toBe('18');
    expect(await text(page, 'plan-blank')).toBe('13');
    expect(await text(page, 'plan-tier')).toBe('up to 18');
    expect(await text(page, 'plan-total')).toBe('€24.00'); // 4.00 + setup 20.00
    expect(await text(page, 'plan-setup')).toContain('9 more sets would waive it');
    await page.getByLabel('Number of sets').fill('10');
    expect(await text(page, 'plan-total')).toBe('€40.00'); // fee waived exactly at 10 sets
    expect(await text(page, 'plan-cost-per-set')).toBe('€4.00');
    expect(await page.locator('[data-testid="plan-tiers"] tr[data-cheapest]').textContent()).toContain('up to 18 cards');
    expect(await page.getByTestId('plan-suggestions').textContent()).toContain('13');
    await page.screenshot({ path: `${SCREENSHOTS}/planner.png`, fullPage: true });

    // From the run page to the proof viewer.
    await page.goto(`${ws}/runs/${runId}`);
    await page.getByRole('navigation', { name: 'Look at this run' }).getByRole('link', { name: 'Inspect cards' }).click();
    await page.waitForURL(new RegExp(`/runs/${runId}/cards/${cardIds[0]}$`));
    await page.getByTestId('proof-card').waitFor();

    // Members: what each role may do, beside the people.
    await page.goto(`${ws}/members`);
    const rights = page.getByTestId('role-rights');
    await rights.waitFor();
    const inviteRow = rights.getByRole('row', { name: /Invite people/ });
    expect(await inviteRow.getByLabel('yes').count()).toBe(1); // owners only
    expect(await rights.getByRole('row', { name: /Enter and edit price sheets/ }).getByLabel('yes').count()).toBe(2);
    await page.screenshot({ path: `${SCREENSHOTS}/members-roles.png`, fullPage: true });
    await page.goto(`${ws}/runs/${runId}/plan`);
    await page.getByTestId('plan-run-faces').waitFor();

    // Tablet width: the planner still fits without sideways scrolling.
    await page.setViewportSize({ width: 820, height: 1180 });
    expect(await page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(820);
    await page.screenshot({ path: `${SCREENSHOTS}/planner-tablet.png`, fullPage: true });

    expect(errors).toEqual([]);
    await context.close();

    // Another browser, same maker: the guide remembers the card opened at full size (recorded by the
    // server), so only the PDF step is left.
    const otherBrowser = await browser.newContext({ viewport: { width: 1280, height: 900 } });
    const otherPage = await otherBrowser.newPage();
    await signIn(otherPage, fx.users.maker.email);
    await otherPage.getByTestId('first-run-guide').getByText('4 of 5 done').waitFor();
    expect(await otherPage.getByTestId('first-run-guide').locator('[data-step]').evaluateAll((els) => els.map((e) => e.getAttribute('data-step')))).toEqual(['pdf']);
    const [pdf] = await Promise.all([otherPage.waitForEvent('download'), otherPage.getByRole('link', { name: /^Download .*\.pdf$/ }).click()]);
    expect(pdf.suggestedFilename()).toMatch(/\.pdf$/);
    // Every step done: the guide folds away.
    await expect.poll(() => otherPage.getByTestId('first-run-guide').count(), { timeout: 10_000 }).toBe(0);
    await otherBrowser.close();

    // A helper reads the price sheets and plans, but is offered no way to change them.
    const helperContext = await browser.newContext({ viewport: { width: 1280, height: 900 } });
    const helperPage = await helperContext.newPage();
    await signIn(helperPage, fx.users.helper.email);
    await helperPage.goto(`${ws}/price-sheets`);
    await helperPage.getByText('Setup fee €20.00, waived from 10 sets.').waitFor();
    expect(await helperPage.getByRole('button', { name: 'New price sheet' }).count()).toBe(0);
    expect(await helperPage.getByRole('button', { name: /^Edit / }).count()).toBe(0);
    await helperPage.goto(`${ws}/plan`);
    await helperPage.getByLabel('Cards in one set').fill('110');
    expect(await text(helperPage, 'plan-padded')).toBe('126'); // 110 -> 126 at 18 a sheet: common practice, no source
    await helperContext.close();
  });

  it('the deck view and proof viewer show copies and each interleaved back where it sits', { timeout: 120_000 }, async () => {
    const { context, page, errors } = await makerPage();
    const ws = `${server.url}/w/${fx.workspaceId}`;
    await page.goto(`${ws}/runs/${interleavedRunId}/deck`);
    const view = page.getByTestId('deck-view');
    await view.waitFor();
    // 4 faces on one sheet of 4 (card-02 twice, as the manifest asks), each with its back in the corner.
    expect(await view.getAttribute('data-sheets')).toBe('1');
    const slots = page.locator('[data-testid="deck-slot"]');
    expect(await slots.evaluateAll((els) => els.map((e) => e.getAttribute('aria-label')))).toEqual([
      'Slot 1: card-02.png, copy 1 of 2, back back-b.png',
      'Slot 3: card-02.png, copy 2 of 2, back back-b.png',
      'Slot 5: card-01.png, back back-a.png',
      'Slot 7: card-03.png, back back-a.png',
    ]);
    expect(await page.getByTestId('slot-back').evaluateAll((els) => els.map((e) => e.getAttribute('data-back-source')))).toEqual(['back-b.png', 'back-b.png', 'back-a.png', 'back-a.png']);
    expect(await page.getByTestId('deck-counts').textContent()).toMatch(/Card faces \(copies counted\)4Different cards3/);
    expect(await text(page, 'deck-backs')).toContain('4 back pages');
    await page.screenshot({ path: `${SCREENSHOTS}/deck-interleaved.png`, fullPage: true });

    // The proof viewer of card-02: both copies' slots, and its own back on the page after each.
    await slots.first().click();
    await page.getByTestId('proof-card').waitFor();
    expect(await text(page, 'card-place')).toBe('Slots 1, 3 of 8 (2 copies).');
    const back = page.getByTestId('card-back');
    expect(await back.getAttribute('data-back-source')).toBe('back-b.png');
    expect(await back.textContent()).toContain('pages 2, 4 of 8, right after each copy');
    await page.screenshot({ path: `${SCREENSHOTS}/proof-viewer-interleaved.png`, fullPage: true });
    expect(errors).toEqual([]);
    await context.close();
  });

  it('a 400-card run page draws only the rows in view, scrolls to the last card and still filters', { timeout: 120_000 }, async () => {
    // Settled cards written straight into PostgreSQL (this is about the table, not rendering); every
    // tenth card has a warning. No images, so thumbnails are not asked for (only done cards have one).
    const db = server.deps.db;
    const big = await insertDoneRunLike(runId);
    const warn = (i: number) => i % 10 === 0;
    const rows = Array.from({ length: 400 }, (_, n) => {
      const i = n + 1;
      return {
        run_id: big.id,
        seq: i,
        source: `bulk/card-${String(i).padStart(4, '0')}.png`,
        role: 'front',
        state: 'skipped',
        source_sha256: 'x'.repeat(64),
        findings: JSON.stringify(warn(i) ? [{ code: 'LOW_DPI', severity: 'warn', message: `Card ${i} is below the DPI asked for.` }] : []),
        deck_order: i,
        copies: 1,
      };
    });
    await db.batchInsert('run_cards', rows, 200);

    const { context, page } = await makerPage();
    await page.goto(`${server.url}/w/${fx.workspaceId}/runs/${big.id}`);
    const table = page.getByTestId('cards-table');
    await table.getByRole('link', { name: 'Inspect card 1: bulk/card-0001.png' }).waitFor();
    expect(await table.getAttribute('aria-rowcount')).toBe('401');
    const rendered = () => page.getByTestId('card-row').count();
    expect(await rendered()).toBeGreaterThan(3);
    expect(await rendered()).toBeLessThan(60);
    await page.screenshot({ path: `${SCREENSHOTS}/run-400-cards.png`, fullPage: true });

    // Keyboard: the table's scroll box takes focus and End goes to the bottom.
    await page.getByTestId('cards-scroller').focus();
    await page.keyboard.press('End');
    const last = table.getByRole('link', { name: 'Inspect card 400: bulk/card-0400.png' });
    await last.waitFor();
    expect(await rendered()).toBeLessThan(60);
    expect(await table.getByRole('link', { name: 'Inspect card 1: bulk/card-0001.png' }).count()).toBe(0);
    expect(await table.locator('tr[aria-rowindex="401"]').count()).toBe(1);

    // Filter: only the 40 warned cards, still windowed from the top.
    await page.getByRole('group', { name: 'Filter cards by finding severity' }).getByRole('button', { name: 'Warnings' }).click();
    await expect.poll(() => table.getAttribute('aria-rowcount')).toBe('41');
    const scroller = page.getByTestId('cards-scroller');
    await scroller.evaluate((el) => el.scrollTo({ top: 0 }));
    await table.getByRole('link', { name: 'Inspect card 10: bulk/card-0010.png' }).waitFor();
    expect(await table.getByRole('link', { name: /Inspect card \d+:/ }).evaluateAll((els) => els.every((e) => /card-\d{3}0\.png$/.test(e.textContent ?? '')))).toBe(true);
    await scroller.evaluate((el) => el.scrollTo({ top: el.scrollHeight }));
    await table.getByRole('link', { name: 'Inspect card 400: bulk/card-0400.png' }).waitFor();

    // A row opens the proof viewer on that card.
    await table.getByRole('link', { name: 'Inspect card 400: bulk/card-0400.png' }).click();
    await page.waitForURL(new RegExp(`/runs/${big.id}/cards/[0-9a-f-]{36}$`));
    await expect.poll(() => text(page, 'proof-position')).toContain('Card 400 of 400: bulk/card-0400.png');
    await context.close();
  });

  it('a 1,000-card deck draws only the press sheets in view and scrolls to the last one', { timeout: 120_000 }, async () => {
    // A run row with 1,000 settled cards written straight into PostgreSQL: this is about the page's
    // windowing, not rendering, so the cards have no images (their thumbnails answer 404).
    const db = server.deps.db;
    const big = await insertDoneRunLike(runId);
    const rows = Array.from({ length: 1000 }, (_, i) => ({
      run_id: big.id,
      seq: i + 1,
      source: `bulk/card-${String(i + 1).padStart(4, '0')}.png`,
      role: 'front',
      state: 'done',
      source_sha256: 'x'.repeat(64),
      outputs: JSON.stringify([`card-${i + 1}.png`]),
    }));
    await db.batchInsert('run_cards', rows, 250);

    const { context, page } = await makerPage();
    const started = Date.now();
    await page.goto(`${server.url}/w/${fx.workspaceId}/runs/${big.id}/deck`);
    const view = page.getByTestId('deck-view');
    await view.waitFor();
    // The recipe pads to sheets of 4 with blanks: 1,000 is already a multiple, so 250 sheets, no padding.
    expect(await view.getAttribute('data-sheets')).toBe('250');
    expect(await page.locator('[data-testid="deck-slot"]').count()).toBeLessThan(120);
    expect(Date.now() - started).toBeLessThan(15_000);
    await view.evaluate((el) => el.scrollTo({ top: el.scrollHeight }));
    await page.getByRole('region', { name: 'Press sheet 250: slots 997 to 1000' }).waitFor();
    expect(await page.locator('[data-testid="deck-slot"]').count()).toBeLessThan(120);
    expect(await page.getByRole('region', { name: 'Press sheet 1: slots 1 to 4' }).count()).toBe(0);
    await page.screenshot({ path: `${SCREENSHOTS}/deck-1000.png` });
    await context.close();
  });
});
